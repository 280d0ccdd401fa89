/**
 * The tables and plot of a parameter sweep: one CSV record per point (its number, the varied
 * parameters, the chosen matrix entries in farads), the merge of sharded slices' tables, and
 * the entries against the first parameter as an SVG plot.
 */
import { InputError } from "../errors.js";
import { entryLabel, entryValue, type MatrixEntry, type PointMatrices, type SweepAxis } from "../extract/sweep.js";
import { csvText, parseCsv } from "./csv.js";
import { linePlotSvg, type PlotSeries } from "./svg-plot.js";

const pointHeader = (total: number): string => `point (of ${total})`;

/**
 * The sweep table as CSV (RFC 4180, via `csvText`): a header, then one record per point
 * run: its number, the varied parameters' values, then the entries in farads.
 */
export function sweepCsv(axes: readonly SweepAxis[], entries: readonly MatrixEntry[], total: number,
  indices: readonly number[], points: ReadonlyArray<Record<string, number>>, results: readonly PointMatrices[]): string {
  const records: Array<Array<string | number>> = [[pointHeader(total), ...axes.map((a) => a.name), ...entries.map((e) => `${entryLabel(e)} (F)`)]];
  indices.forEach((k, q) => {
    const r = results[q];
    records.push([k, ...axes.map((a) => points[k][a.name]), ...entries.map((e) => entryValue(e, r.names, r.maxwell, r.mutual))]);
  });
  return csvText(records);
}

/**
 * Join slices' CSV tables into the table of the whole sweep, points in order. Headers must
 * be identical and no point may appear twice; missing points are listed (not an error, so
 * a partial table can be looked at; the caller says so).
 */
export function mergeSweepCsv(files: ReadonlyArray<{ file: string; text: string }>): { text: string; total: number; missing: number[] } {
  if (files.length === 0) throw new InputError("sweep merge: no CSV files given");
  let header: string[] | undefined;
  let headerFile = "";
  let total = 0;
  const rows = new Map<number, { file: string; line: number; cells: string[] }>();
  for (const { file, text } of files) {
    let records: string[][];
    try { records = parseCsv(text); } catch (err) {
      const m = /^line (\d+): (.*)$/.exec((err as Error).message);
      throw new InputError(m ? m[2] : (err as Error).message, file, m ? `line ${m[1]}` : undefined);
    }
    if (records.length === 0) throw new InputError("empty file (expected a sweep table)", file);
    const head = records[0];
    const t = /^point \(of (\d+)\)$/.exec(head[0] ?? "");
    if (!t) throw new InputError(`the first column is "${head[0] ?? ""}", not "point (of N)": not a sigmesh sweep table`, file, "line 1");
    if (header === undefined) { header = head; headerFile = file; total = Number(t[1]); }
    else if (head.length !== header.length || head.some((h, i) => h !== header![i])) {
      throw new InputError(`header differs from ${headerFile}'s (${head.join(",")} against ${header.join(",")}): the slices are of different sweeps`, file, "line 1");
    }
    records.slice(1).forEach((cells, i) => {
      const line = i + 2;
      if (cells.length === 1 && cells[0] === "") return;
      if (cells.length !== header!.length) throw new InputError(`expected ${header!.length} fields, got ${cells.length}`, file, `line ${line}`);
      if (!/^\d+$/.test(cells[0]) || Number(cells[0]) >= total) throw new InputError(`point "${cells[0]}" is not a point number from 0 to ${total - 1}`, file, `line ${line}`);
      const k = Number(cells[0]);
      const seen = rows.get(k);
      if (seen) throw new InputError(`point ${k} is already in ${seen.file}, line ${seen.line}`, file, `line ${line}`);
      rows.set(k, { file, line, cells });
    });
  }
  const order = [...rows.keys()].sort((a, b) => a - b);
  const missing: number[] = [];
  for (let k = 0; k < total; k++) if (!rows.has(k)) missing.push(k);
  return { text: csvText([header!, ...order.map((k) => rows.get(k)!.cells)]), total, missing };
}

/**
 * The chosen entries against the first parameter as an SVG line plot; with more than one
 * parameter, one line per combination of the others' values.
 */
export function sweepSvg(axes: readonly SweepAxis[], entries: readonly MatrixEntry[], indices: readonly number[],
  points: ReadonlyArray<Record<string, number>>, results: readonly PointMatrices[], title: string, lengthUnit?: string): string {
  const first = axes[0];
  const others = axes.slice(1);
  const groups = new Map<string, number[]>();
  indices.forEach((k, q) => {
    const key = others.map((a) => `${a.name}=${points[k][a.name]}`).join(", ");
    const g = groups.get(key) ?? [];
    g.push(q);
    groups.set(key, g);
  });
  const series: PlotSeries[] = [];
  for (const e of entries) {
    for (const [key, qs] of groups) {
      const sorted = [...qs].sort((a, b) => points[indices[a]][first.name] - points[indices[b]][first.name]);
      series.push({
        label: key ? `${entryLabel(e)}, ${key}` : entryLabel(e),
        x: sorted.map((q) => points[indices[q]][first.name]),
        y: sorted.map((q) => { const r = results[q]; return entryValue(e, r.names, r.maxwell, r.mutual); }),
      });
    }
  }
  // A scene parameter is a plain number in the scene's units: a length in its length unit.
  const xLabel = lengthUnit ? `${first.name} (scene units; lengths in ${lengthUnit})` : first.name;
  return linePlotSvg(series, { title, x: { label: xLabel, log: first.log, prefix: false }, y: { label: "capacitance", unit: "F" } });
}

/** The files of a finished sweep: the table, and the plot when asked for. */
export function sweepFiles(axes: readonly SweepAxis[], entries: readonly MatrixEntry[], points: ReadonlyArray<Record<string, number>>,
  indices: readonly number[], results: ReadonlyMap<number, PointMatrices>, targets: { csv: string; svg?: string; title: string; lengthUnit?: string }): Array<{ path: string; option: string; data: string }> {
  const ordered = indices.map((k) => results.get(k)!);
  const files = [{ path: targets.csv, option: "--csv", data: sweepCsv(axes, entries, points.length, indices, points, ordered) }];
  if (targets.svg) files.push({ path: targets.svg, option: "--svg", data: sweepSvg(axes, entries, indices, points, ordered, targets.title, targets.lengthUnit) });
  return files;
}
