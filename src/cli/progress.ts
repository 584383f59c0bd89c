/** A progress bar on stderr, only when stderr is a terminal. */
import cliProgress from 'cli-progress';
import type { ProgressFn } from '../pipeline/estimate.js';

/** Returns a progress callback and a function that clears the bar. */
export function progressBar(label: string, quiet: boolean): { onProgress: ProgressFn | undefined; stop: () => void } {
  if (quiet || !process.stderr.isTTY) return { onProgress: undefined, stop: () => {} };
  const bar = new cliProgress.SingleBar(
    { stream: process.stderr, format: `${label} [{bar}] {value}/{total} dams`, clearOnComplete: true, hideCursor: true },
    cliProgress.Presets.shades_classic,
  );
  let started = false;
  return {
    onProgress: ({ done, total }) => {
      if (!started) {
        bar.start(total, 0);
        started = true;
      }
      bar.update(done);
    },
    stop: () => {
      if (started) bar.stop();
    },
  };
}
