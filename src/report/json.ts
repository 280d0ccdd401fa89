/**
 * The JSON report of an extraction. SI units throughout (m, m², V, C, F, V/m, J, N, s, bytes).
 * Field names are documented in README.md ("JSON report"); keep the two in step.
 */
import type { ExtractionResult } from "../extract/result.js";
import { toRows } from "../extract/capacitance.js";
import type { LengthUnit } from "../io/units.js";
import type { RemeshSummary } from "../mesh/remesh.js";
import { cautionsFor } from "./cautions.js";

export interface ReportContext {
  version: string;
  files: string[];
  scene?: string;
  unit: LengthUnit;
  /** Warnings from loading and checking, before extraction. */
  inputWarnings: string[];
  /** The scene's title and the parameter values used, reported when given. */
  title?: string;
  parameters?: Record<string, number>;
  /** What remeshing of CAD-style flat faces changed, when it did. */
  remesh?: RemeshSummary;
}

export const REPORT_FORMAT = "sigmesh-extraction/1";

/** JSON.stringify replacer: NaN and ±Infinity, which JSON cannot hold, as null. */
export function nonFiniteAsNull(_key: string, v: unknown): unknown {
  return typeof v === "number" && !Number.isFinite(v) ? null : v;
}

function finiteOrNull(x: number): number | null {
  return Number.isFinite(x) ? x : null;
}

export function extractionReport(r: ExtractionResult, ctx: ReportContext): Record<string, unknown> {
  const k = r.k;
  const worst = r.conductors.reduce((a, c) => (c.fieldRatio > a.fieldRatio ? c : a), r.conductors[0]);
  return {
    format: REPORT_FORMAT,
    sigmesh: ctx.version,
    created: new Date().toISOString(),
    input: {
      files: ctx.files, scene: ctx.scene ?? null, unit: ctx.unit,
      ...(ctx.title !== undefined ? { title: ctx.title } : {}),
      ...(ctx.parameters && Object.keys(ctx.parameters).length > 0 ? { parameters: ctx.parameters } : {}),
      remeshed: ctx.remesh ?? null,
    },
    medium: { relativePermittivity: r.relativePermittivity, permittivity: r.permittivity, breakdownField: r.breakdownField },
    conductors: r.conductors.map((c) => ({
      name: c.name,
      triangles: c.triangles,
      area: c.area,
      closed: c.closed,
      potential: c.potential,
      charge: c.charge,
      peakField: finiteOrNull(c.peakField),
      peakFieldAt: c.peakFieldAt.map(finiteOrNull),
      peakFieldSingular: c.peakFieldSingular,
      peakFieldError: c.peakFieldError === null ? null : finiteOrNull(c.peakFieldError),
      peakFieldGrowth: c.peakFieldGrowth === null ? null : finiteOrNull(c.peakFieldGrowth),
      fieldRatio: finiteOrNull(c.fieldRatio),
      fieldCheck: {
        medium: c.medium,
        breakdownField: c.mediumBreakdownField,
        field: finiteOrNull(c.criticalField),
        at: c.criticalFieldAt.map(finiteOrNull),
        margin: c.fieldRatio > 0 ? 1 / c.fieldRatio : null,
      },
      force: c.force,
      forceResolution: c.forceResolution,
      floating: c.floating,
    })),
    capacitance: {
      maxwell: toRows(r.maxwell, k),
      mutual: toRows(r.mutual, k),
      reference: r.reference,
      asymmetry: r.asymmetry,
      extrapolated: r.accuracy !== undefined,
      reduced: r.floatingNames.length > 0
        ? { names: r.reducedNames, maxwell: toRows(r.reducedMaxwell, r.reducedNames.length), mutual: toRows(r.reducedMutual, r.reducedNames.length) }
        : null,
    },
    model: {
      groundPlane: r.groundPlane ?? null,
      symmetry: r.symmetry,
      symmetryCopies: r.symmetryCopies,
      mirrorNets: r.mirrorNets,
      removedInSymmetryPlane: r.removedInSymmetryPlane,
    },
    floating: r.floatingNames.map((name, i) => ({ name, potential: r.floatingPotentials[i] })),
    dielectrics: r.dielectric
      ? {
          bodies: r.dielectric.bodies,
          forces: r.dielectric.bodies.map((b, i) => ({ name: b.name, force: r.dielectric!.forces[i] })),
          interfacePanels: r.dielectric.interfacePanels,
          removedInterfacePanels: r.removedInterfacePanels,
          mergedInterfacePanels: r.dielectric.mergedInterfacePanels,
          testing: r.dielectric.testing,
        }
      : null,
    energy: r.energy,
    accuracy: r.accuracy
      ? {
          method: "richardson",
          levels: r.accuracy.levels.map((l) => ({ panels: l.panels, maxwell: toRows(l.maxwell, k) })),
          order: r.accuracy.richardson.order,
          orderObserved: r.accuracy.richardson.orderObserved,
          errorEstimate: toRows(r.accuracy.richardson.errorEstimate, k),
          relativeError: r.accuracy.richardson.relativeError,
          nested: r.accuracy.nested,
          refinementDisplacement: r.accuracy.displacement,
          lowerBound: r.accuracy.lowerBound,
          adaptive: r.accuracy.adaptive
            ? {
                requested: r.accuracy.adaptive.requested,
                reached: r.accuracy.adaptive.reached,
                stop: r.accuracy.adaptive.stop,
                marking: r.accuracy.adaptive.marking,
                couplingThreshold: r.accuracy.adaptive.couplingThreshold,
                governing: toRows(Float64Array.from(r.accuracy.adaptive.governing), k).map((row) => row.map((x) => x === 1)),
                relativeErrorEstimate: toRows(Float64Array.from(r.accuracy.richardson.errorEstimate, (e, i) => (r.maxwell[i] !== 0 ? e / Math.abs(r.maxwell[i]) : 0)), k),
                steps: r.accuracy.levels.length,
              }
            : null,
        }
      : null,
    fieldCheck: {
      breakdownField: r.breakdownField,
      media: r.media,
      worstConductor: worst.name,
      peakField: finiteOrNull(worst.peakField),
      fieldRatio: finiteOrNull(worst.fieldRatio),
      // A peak at a sharp edge is no verdict (its value depends on the mesh): listed apart.
      exceeded: r.conductors.filter((c) => c.fieldRatio >= 1 && !c.peakFieldSingular).map((c) => c.name),
      sharpEdges: r.conductors.filter((c) => c.peakFieldSingular).map((c) => c.name),
      cautions: cautionsFor(r.potentials, { perMedium: r.media.length > 1 }),
    },
    forcesComplete: r.forcesComplete,
    solver: {
      method: r.solver.method,
      solver: r.solver.solver,
      choice: r.solver.choice,
      panels: r.solver.panels,
      rightHandSides: r.solver.rightHandSides,
      seconds: r.solver.seconds,
      assemblySeconds: r.solver.assemblySeconds,
      solveSeconds: r.solver.solveSeconds,
      entriesPerSecond: r.solver.entriesPerSecond,
      factorGflops: r.solver.factorGflops ?? null,
      iterations: r.solver.iterations ?? null,
      residual: r.solver.residual ?? null,
      peakMemory: r.solver.peakMemory,
      compression: r.solver.compressionRatio === undefined ? null : {
        tolerance: r.solver.compressionTolerance ?? null,
        ratio: r.solver.compressionRatio,
        maxRank: r.solver.maxRank ?? null,
        meanRank: r.solver.meanRank ?? null,
        nearBlocks: r.solver.nearBlocks ?? null,
        farBlocks: r.solver.farBlocks ?? null,
        operatorBytes: r.solver.operatorBytes ?? null,
        estimatedBytes: r.solver.estimatedBytes ?? null,
      },
      preconditioner: r.solver.preconditionerCluster === undefined ? null : {
        cluster: r.solver.preconditionerCluster,
        coarseAggregates: r.solver.coarseAggregates ?? 0,
        seconds: r.solver.preconditionerSeconds ?? null,
      },
      krylovTolerance: r.solver.krylovTolerance ?? null,
    },
    orientation: r.orientation,
    warnings: [...ctx.inputWarnings, ...r.warnings],
  };
}
