// Solves run on the pool's threads: a heavy one holds one thread while others are answered, one
// over the time limit is cut off, and a revision is solved once for its save, the history's
// comparisons and the shop sheet.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createSolvePool, type SolvePool } from '../../server/solve/pool';
import { createTestApp, TestClient, type TestApp } from '../helpers/app';

let t: TestApp;
let solver: SolvePool;
let builder: TestClient;
let other: TestClient;
let projectId = '';
/** Resolvers waiting for the next job a thread of `solver` takes. */
const onStart: (() => void)[] = [];
const nextJobStart = () => new Promise<void>((resolve) => onStart.push(resolve));

beforeAll(async () => {
  solver = createSolvePool({
    size: 2,
    onJob: (event) => event === 'start' && onStart.shift()?.(),
  });
  t = await createTestApp({ solver });
  builder = new TestClient(t.app);
  await builder.register('pool.builder@example.com');
  other = new TestClient(t.app);
  await other.register('pool.other@example.com');
  projectId = (await builder.post('/api/projects', { name: 'Pool', displayUnit: 'in' }).expect(201))
    .body.id;
  // Both threads started before anything is timed.
  await solver.warm();
});
afterAll(async () => {
  await solver?.close();
  await t?.close();
});

// Shigley's Mechanical Engineering Design 9th ed., Example 1-3 (check-values.md §7):
// w = a − b − c − d with a = 1.750, b = 0.750, c = 0.120, d = 0.875 gives w = 0.005 in;
// `k` thousandths more of `a` give another model (not in any cache) and w = 0.005 + k/1000.
function shigley(k: number) {
  return {
    format: 'fairsheet.model',
    version: 1,
    units: 'in',
    dimensions: [
      { name: 'a', kind: 'stated', value: 1.75 + k / 1000, tol: 0.003 },
      { name: 'b', kind: 'stated', value: 0.75, tol: 0.001 },
      { name: 'c', kind: 'stated', value: 0.12, tol: 0.005 },
      { name: 'd', kind: 'stated', value: 0.875, tol: 0.001 },
      { name: 'w', kind: 'derived' },
    ],
    relations: [{ id: 'gap', expr: 'w = a - b - c - d' }],
  };
}

/**
 * 100 non-linear relations in one ring (every unknown depends on every other: one block solved by
 * Newton) and a Monte Carlo of 10,000 samples, each solving the ring again: 200 dimensions ×
 * 10,000 samples, within the model limits, and seconds of work.
 */
const ring = 100;
const heavy = {
  model: {
    format: 'fairsheet.model',
    version: 1,
    units: 'mm',
    dimensions: [
      ...Array.from({ length: ring }, (_, i) => ({
        name: `g${i}`,
        kind: 'stated',
        value: 10 + i / 10,
        tol: 0.01,
      })),
      ...Array.from({ length: ring }, (_, i) => ({ name: `x${i}`, kind: 'derived' })),
    ],
    relations: Array.from({ length: ring }, (_, i) => {
      const next = `x${(i + 1) % ring}`;
      return { id: `r${i}`, expr: `x${i} + ${next} * ${next} / 1000 mm = g${i}` };
    }),
  },
  monteCarlo: { samples: 10_000, seed: 1 },
};

async function timed<T>(request: PromiseLike<T>): Promise<[T, number]> {
  const start = performance.now();
  const res = await request;
  return [res, performance.now() - start];
}

describe('solves on the pool', () => {
  it("answers another client's GET /api/health and small POST /api/solve in < 500 ms while a heavy solve runs", async () => {
    const started = nextJobStart();
    let heavyAnswered = false;
    const heavyRequest = builder.post('/api/solve', heavy).then((res) => {
      heavyAnswered = true;
      return res;
    });
    await started;
    const [health, healthMs] = await timed(other.get('/api/health'));
    const [small, smallMs] = await timed(other.post('/api/solve', { model: shigley(1) }));
    // The heavy solve was still running: the small answers did not wait for it.
    expect(heavyAnswered).toBe(false);
    expect(health.status).toBe(200);
    expect(healthMs).toBeLessThan(500);
    expect(small.status).toBe(200);
    expect(small.body.values.w.value).toBeCloseTo(0.006, 9);
    expect(smallMs).toBeLessThan(500);
    const answer = await heavyRequest;
    expect(answer.status).toBe(200);
    expect(answer.body.status).toBe('solved');
    expect(answer.body.monteCarlo.samples).toBe(10_000);
  });

  it('answers the same model again from the cache, not a thread', async () => {
    await other.post('/api/solve', { model: shigley(2) }).expect(200);
    const jobs = solver.jobs;
    const res = await builder.post('/api/solve', { model: shigley(2) }).expect(200);
    expect(res.body.values.w.value).toBeCloseTo(0.007, 9);
    expect(solver.jobs).toBe(jobs);
  });
});

describe('a solve over the time limit', () => {
  let limited: TestApp;
  let limitedSolver: SolvePool;
  let client: TestClient;

  beforeAll(async () => {
    limitedSolver = createSolvePool({ size: 1, timeLimitMs: 1000 });
    limited = await createTestApp({ databaseUrl: t.databaseUrl, solver: limitedSolver });
    client = new TestClient(limited.app);
    await client.register('pool.limited@example.com');
    await limitedSolver.warm();
  });
  afterAll(async () => {
    await limitedSolver?.close();
    await limited?.close();
  });

  it('answers 422 naming the limit, and the next solve is answered by a new thread', async () => {
    const res = await client.post('/api/solve', heavy);
    expect(res.status).toBe(422);
    expect(res.body.error.code).toBe('unprocessable');
    expect(res.body.error.message).toMatch(/not solved within the 1 s a solve may take/);
    expect(res.body.error.details).toEqual({ limit: 'solve-time', limitMs: 1000 });
    const next = await client.post('/api/solve', { model: shigley(3) }).expect(200);
    expect(next.body.values.w.value).toBeCloseTo(0.008, 9);
    expect(limitedSolver.jobs).toBe(2);
  });
});

describe('a revision is solved once', () => {
  const url = (path: string) => `/api/projects/${projectId}${path}`;

  beforeAll(async () => {
    await builder.put(url('/model'), { revision: 0, model: shigley(10) }).expect(200);
    await builder.put(url('/model'), { revision: 1, model: shigley(20) }).expect(200);
  });

  it('GET /compare reuses the solves of the saves: no job, however often it is asked', async () => {
    const jobs = solver.jobs;
    for (let n = 0; n < 2; n++) {
      const res = await builder.get(url('/compare?from=1&to=2')).expect(200);
      // w moves by the 10 thousandths that a moved (see shigley).
      expect(res.body.moved.find((m: { name: string }) => m.name === 'w').delta).toBeCloseTo(
        0.01,
        9,
      );
    }
    expect(solver.jobs).toBe(jobs);
  });

  it('GET /compare on an instance that never solved the revisions solves each once', async () => {
    const fresh = createSolvePool({ size: 1 });
    const instance = await createTestApp({ databaseUrl: t.databaseUrl, solver: fresh });
    try {
      const c = new TestClient(instance.app);
      expect((await c.login('pool.builder@example.com', 'correct horse battery')).status).toBe(200);
      await c.get(url('/compare?from=1&to=2')).expect(200);
      expect(fresh.jobs).toBe(2);
      await c.get(url('/compare?from=1&to=2')).expect(200);
      expect(fresh.jobs).toBe(2);
    } finally {
      await fresh.close();
      await instance.close();
    }
  });

  it('the shop sheet reads the features stored with the revision: no job for its JSON, CSV and PDF, on any instance', async () => {
    const jobs = solver.jobs;
    await builder.get(url('/shop-sheet')).expect(200);
    await builder.get(url('/shop-sheet.csv')).expect(200);
    await builder.get(url('/shop-sheet.pdf')).expect(200);
    expect(solver.jobs).toBe(jobs);
    // An instance that never solved this revision reads the same stored answer.
    const fresh = createSolvePool({ size: 1 });
    const instance = await createTestApp({ databaseUrl: t.databaseUrl, solver: fresh });
    try {
      const c = new TestClient(instance.app);
      expect((await c.login('pool.builder@example.com', 'correct horse battery')).status).toBe(200);
      const sheet = await c.get(url('/shop-sheet')).expect(200);
      expect(sheet.body.revision).toBe(2);
      expect(fresh.jobs).toBe(0);
    } finally {
      await fresh.close();
      await instance.close();
    }
  });

  it('a save solves its revision and its features once; the shop sheet and compare reuse them', async () => {
    const jobs = solver.jobs;
    await builder.put(url('/model'), { revision: 2, model: shigley(30) }).expect(200);
    expect(solver.jobs).toBe(jobs + 2);
    await builder.get(url('/shop-sheet')).expect(200);
    await builder.get(url('/compare?from=2&to=3')).expect(200);
    expect(solver.jobs).toBe(jobs + 2);
  });
});
