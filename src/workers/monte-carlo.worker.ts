// Runs a seeded Monte Carlo of the model off the page's thread, reporting progress, so the
// workspace stays responsive while thousands of re-solves run.
import { solveModel, type FairsheetModelInput } from '@shared/engine';

export interface MonteCarloRequest {
  model: FairsheetModelInput;
  samples: number;
  seed: number;
  values: string[];
}

export type MonteCarloMessage =
  | { type: 'progress'; done: number; total: number }
  | { type: 'done'; result: ReturnType<typeof solveModel>['monteCarlo'] }
  | { type: 'error'; message: string };

self.onmessage = (event: MessageEvent<MonteCarloRequest>) => {
  const { model, samples, seed, values } = event.data;
  const post = (m: MonteCarloMessage) => self.postMessage(m);
  try {
    let last = 0;
    const result = solveModel(model, {
      timeLimitMs: 60_000,
      monteCarlo: {
        samples,
        seed,
        values,
        onProgress: (done: number, total: number) => {
          const now = performance.now();
          if (now - last > 50 || done === total) {
            last = now;
            post({ type: 'progress', done, total });
          }
        },
      },
    });
    post({ type: 'done', result: result.monteCarlo });
  } catch (err) {
    post({ type: 'error', message: (err as Error).message });
  }
};
