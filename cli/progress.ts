/**
 * Progress on stderr, only when stderr is a terminal (never in pipes, CI logs or --json
 * captures). Heavy module loaded only when a bar is shown.
 */
export interface Progress {
  update(fraction: number, label: string): void;
  stop(): void;
}

export async function startProgress(title: string): Promise<Progress> {
  if (!process.stderr.isTTY) return { update() {}, stop() {} };
  const { SingleBar, Presets } = (await import('cli-progress')).default;
  const bar = new SingleBar(
    { format: `${title} [{bar}] {percentage}% | {label} | ETA {eta_formatted}`, stream: process.stderr, hideCursor: true, clearOnComplete: true },
    Presets.shades_classic,
  );
  bar.start(1000, 0, { label: '' });
  let last = -1;
  return {
    update(fraction, label) {
      const value = Math.round(fraction * 1000);
      if (value !== last) {
        last = value;
        bar.update(value, { label });
      }
    },
    stop() {
      bar.stop();
    },
  };
}
