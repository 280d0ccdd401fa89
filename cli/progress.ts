/**
 * Progress on stderr for long work: a bar with ETA when stderr is a terminal, nothing otherwise.
 */
import cliProgress from "cli-progress";

export interface Progress {
  update(phase: string, fraction: number, level: number, levels: number): void;
  stop(): void;
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
  let started = false;
  // Assembly and solve take roughly equal shares of each mesh level; later levels are 4× the work.
  return {
    update(phase, fraction, level, levels) {
      let total = 0, done = 0;
      for (let l = 0; l < levels; l++) total += Math.pow(4, l);
      for (let l = 0; l < level; l++) done += Math.pow(4, l);
      // Building the operator (dense assembly or compression) and solving share each level.
      const within = phase === "assembly" || phase === "compression" ? 0.5 * fraction : phase === "solve" ? 0.5 + 0.5 * fraction : 1;
      const value = Math.round((1000 * (done + within * Math.pow(4, level))) / total);
      if (!started) { bar.start(1000, value, { phase, level: level + 1, levels }); started = true; }
      else bar.update(value, { phase, level: level + 1, levels });
    },
    stop() { if (started) bar.stop(); },
  };
}
