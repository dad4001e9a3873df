import { afterEach, describe, expect, it } from 'vitest';
import { AppError } from '../../../../server/http/errors';
import { createSolvePool, type SolvePool } from '../../../../server/solve/pool';

const stub = new URL('./stub-worker.mjs', import.meta.url);
const pools: SolvePool[] = [];
const pool = (options: Parameters<typeof createSolvePool>[0]) => {
  const p = createSolvePool(options);
  pools.push(p);
  return p;
};
afterEach(async () => {
  await Promise.all(pools.splice(0).map((p) => p.close()));
});

const refusal = (promise: Promise<unknown>) =>
  promise.then(
    () => {
      throw new Error('expected a refusal');
    },
    (err: unknown) => err as AppError,
  );

// Shigley's Mechanical Engineering Design 9th ed., Example 1-3 (check-values.md §7):
// w = a − b − c − d = 1.750 − 0.750 − 0.120 − 0.875 = 0.005 in.
const shigley = {
  format: 'fairsheet.model',
  version: 1,
  units: 'in',
  dimensions: [
    { name: 'a', kind: 'stated', value: 1.75, tol: 0.003 },
    { name: 'b', kind: 'stated', value: 0.75, tol: 0.001 },
    { name: 'c', kind: 'stated', value: 0.12, tol: 0.005 },
    { name: 'd', kind: 'stated', value: 0.875, tol: 0.001 },
    { name: 'w', kind: 'derived' },
  ],
  relations: [{ id: 'gap', expr: 'w = a - b - c - d' }],
};

describe('the solve pool', () => {
  it('solves on its own thread (the TypeScript engine loads there) and answers the same model, keys in another order, from its cache', async () => {
    const p = pool({ size: 1 });
    const result = await p.solve(shigley);
    expect(result.status).toBe('solved');
    expect(result.values.w!.value).toBeCloseTo(0.005, 9);
    expect(p.jobs).toBe(1);
    const reordered = Object.fromEntries(Object.entries(shigley).reverse());
    expect((await p.solve(reordered)).values.w!.value).toBeCloseTo(0.005, 9);
    expect(p.jobs).toBe(1);
    // Other options are another question: a Monte Carlo is a job of its own.
    await p.solve(shigley, { monteCarlo: { samples: 100, seed: 1 } });
    expect(p.jobs).toBe(2);
  });

  it('refuses an answer over the size limit with 422 naming it', async () => {
    const p = pool({ size: 1, maxAnswerChars: 1000 });
    const err = await refusal(p.solveJson(shigley));
    expect(err.status).toBe(422);
    expect(err.details).toMatchObject({ limit: 'solve-answer' });
    expect(err.message).toMatch(/at most 0.001 MB/);
  });

  it('ends a job over the time limit with 422 naming the limit, and a new thread takes the next job', async () => {
    const p = pool({ size: 1, timeLimitMs: 1000, entry: stub });
    const err = await refusal(p.solveJson({ hang: true }));
    expect(err).toBeInstanceOf(AppError);
    expect(err.status).toBe(422);
    expect(err.message).toMatch(/within the 1 s a solve may take/);
    expect(err.details).toEqual({ limit: 'solve-time', limitMs: 1000 });
    expect(JSON.parse(await p.solveJson({ n: 1 }))).toEqual({ echo: { n: 1 } });
    expect(p.jobs).toBe(2);
  });

  it('ends a job that fills its heap with 422 naming the memory limit, and serves the next', async () => {
    const p = pool({ size: 1, memoryLimitMb: 16, entry: stub });
    const err = await refusal(p.solveJson({ grow: true }));
    expect(err.status).toBe(422);
    expect(err.details).toEqual({ limit: 'solve-memory', limitMb: 16 });
    expect(JSON.parse(await p.solveJson({ n: 2 }))).toEqual({ echo: { n: 2 } });
  });

  it('gives two askers of the same model one job', async () => {
    const p = pool({ size: 1, entry: stub });
    const [a, b] = await Promise.all([p.solveJson({ n: 3 }), p.solveJson({ n: 3 })]);
    expect(a).toBe(b);
    expect(p.jobs).toBe(1);
  });

  it('answers 503 when too many jobs wait, and refuses those waiting and running with 503 once closed', async () => {
    let started!: () => void;
    const running = new Promise<void>((resolve) => (started = resolve));
    const p = pool({
      size: 1,
      maxWaiting: 1,
      entry: stub,
      onJob: (event) => event === 'start' && started(),
    });
    const hung = refusal(p.solveJson({ hang: true }));
    await running;
    const waiting = refusal(p.solveJson({ n: 4 }));
    const busy = await refusal(p.solveJson({ n: 5 }));
    expect(busy.status).toBe(503);
    expect(busy.headers).toEqual({ 'Retry-After': '5' });
    await p.close();
    expect((await hung).status).toBe(503);
    expect((await waiting).status).toBe(503);
    expect((await refusal(p.solveJson({ n: 6 }))).status).toBe(503);
  });
});
