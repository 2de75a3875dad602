/**
 * Progress lines for the long steps of a build (calibration, figures, site),
 * written to stderr only when wanted: a terminal, or --progress. Results go to
 * stdout elsewhere; a CI log stays quiet.
 */
export interface Progress {
  step(message: string): void;
}

export function createProgress(enabled: boolean, stream: { write(s: string): unknown } = process.stderr): Progress {
  if (!enabled) return { step: () => {} };
  const start = Date.now();
  return {
    step(message: string) {
      const s = ((Date.now() - start) / 1000).toFixed(1).padStart(6);
      stream.write(`[${s} s] ${message}\n`);
    },
  };
}
