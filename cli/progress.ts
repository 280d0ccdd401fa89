/**
 * Progress on stderr for long work: a bar with the current phase and an ETA when stderr is a
 * terminal, nothing otherwise.
 *
 * The library reports `progress(phase, fraction)` per mesh level. Dense solves go through
 * "assembly" then "solve"; the compressed solver through "tree", "near field", "far field"
 * then "solve"; refinement ends with "fields". Each phase owns a share of its level, and
 * later levels are 4× the work of the one before (uniform refinement), so the bar moves
 * at a steady rate and cli-progress's ETA (rate over the last updates) means something.
 */
import cliProgress from "cli-progress";

export interface Progress {
  update(phase: string, fraction: number, level: number, levels: number): void;
  stop(): void;
}

/**
 * Share [start, end) of a level each phase occupies. Compressed split measured on spheres of
 * 81,920 and 327,680 panels (DEVELOPERS.md, measured figures): tree ≈ 1 %, near field and far
 * field ≈ 30 % each, solve ≈ 40 %. Dense: assembly and solve about half each.
 */
const PHASES: Record<string, [number, number]> = {
  assembly: [0, 0.5],
  compression: [0.02, 0.6],
  tree: [0, 0.02],
  "near field": [0.02, 0.32],
  "far field": [0.32, 0.6],
};

/** Fraction (0..1) of the whole run reached at `fraction` of `phase` on `level` of `levels`. */
export function progressValue(phase: string, fraction: number, level: number, levels: number, compressed: boolean): number {
  let total = 0, done = 0;
  for (let l = 0; l < levels; l++) total += Math.pow(4, l);
  for (let l = 0; l < level; l++) done += Math.pow(4, l);
  const f = Math.min(1, Math.max(0, Number.isFinite(fraction) ? fraction : 0));
  let span: [number, number];
  if (phase === "solve") span = compressed ? [0.6, 1] : [0.5, 1];
  else span = PHASES[phase] ?? [1, 1];
  const within = span[0] + f * (span[1] - span[0]);
  return Math.min(1, (done + within * Math.pow(4, level)) / total);
}

export function progressBar(enabled: boolean): Progress {
  if (!enabled || !process.stderr.isTTY) return { update() {}, stop() {} };
  const bar = new cliProgress.SingleBar({
    stream: process.stderr,
    format: "  {phase} [{bar}] {percentage}% | ETA {eta_formatted} | mesh {level}/{levels}",
    hideCursor: true,
    clearOnComplete: true,
    etaBuffer: 20,
  }, cliProgress.Presets.shades_classic);
  let started = false, compressed = false, last = 0;
  return {
    update(phase, fraction, level, levels) {
      if (phase === "tree" || phase === "near field" || phase === "far field" || phase === "compression") compressed = true;
      else if (phase === "assembly") compressed = false;
      // Never step back (a phase may report its start after the previous one's end).
      const value = Math.max(last, Math.round(1000 * progressValue(phase, fraction, level, levels, compressed)));
      last = value;
      const payload = { phase: phase.padEnd(10), level: level + 1, levels };
      if (!started) { bar.start(1000, value, payload); started = true; }
      else bar.update(value, payload);
    },
    stop() { if (started) bar.stop(); },
  };
}
