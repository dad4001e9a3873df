import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, TestClient, type TestApp } from '../helpers/app';

let t: TestApp;
let builder: TestClient;
let signedOut: TestClient;

beforeAll(async () => {
  t = await createTestApp();
  builder = new TestClient(t.app);
  await builder.register('solver@example.com');
  signedOut = new TestClient(t.app);
  await signedOut.refresh();
});
afterAll(() => t.close());

// Shigley's Mechanical Engineering Design 9th ed., Example 1-3 (check-values.md §7): a bolt-and-
// sleeve stack, w = a − b − c − d with a = 1.750 ± 0.003, b = 0.750 ± 0.001, c = 0.120 ± 0.005,
// d = 0.875 ± 0.001 (§7.2 [published]).
// The worked example gives worst case ±0.010 in and RSS ±0.006 in (rounded).
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

describe('POST /api/solve', () => {
  it('answers the result of a posted model', async () => {
    const res = await builder.post('/api/solve', { model: shigley }).expect(200);
    expect(res.body.status).toBe('solved');
    expect(res.body.values.w.value).toBeCloseTo(0.005, 9);
    expect(res.body.values.w.worstCase).toBeCloseTo(0.01, 6);
    expect(res.body.values.w.rss).toBeCloseTo(0.006, 3);
  });

  it('runs a seeded Monte Carlo on request, the same for the same seed', async () => {
    const body = { model: shigley, monteCarlo: { samples: 2000, seed: 7 } };
    const a = await builder.post('/api/solve', body).expect(200);
    const b = await builder.post('/api/solve', body).expect(200);
    expect(a.body.monteCarlo.values.w.mean).toBeCloseTo(0.005, 3);
    expect(a.body.monteCarlo.values.w.sigma).toBe(b.body.monteCarlo.values.w.sigma);
  });

  it('refuses a model that does not match the format with 400 and the issues', async () => {
    const res = await builder.post('/api/solve', { model: { ...shigley, version: 2 } });
    expect(res.status).toBe(400);
    expect(res.body.error.details.fields.map((f: { path: string }) => f.path)).toContain(
      'model.version',
    );
  });

  it('answers 401 when signed out', async () => {
    expect((await signedOut.post('/api/solve', { model: shigley })).status).toBe(401);
  });

  it('refuses a body over the size cap with 413', async () => {
    const huge = {
      model: {
        ...shigley,
        dimensions: [{ name: 'x', kind: 'stated', value: 1, note: 'n'.repeat(3_000_000) }],
      },
    };
    expect((await builder.post('/api/solve', huge)).status).toBe(413);
  });
});

describe('GET /api/reference/threads/:designation', () => {
  it('2BA: 4.7 mm × 0.81 mm with a ≈ 4.0 mm tap drill', async () => {
    const res = await builder.get('/api/reference/threads/2BA').expect(200);
    // BS 93 basic sizes (check-values.md §1.2 [published]): 2BA major 4.70 mm, pitch 0.81 mm.
    expect(res.body.majorDiameterMm).toBeCloseTo(4.7, 6);
    expect(res.body.pitchMm).toBeCloseTo(0.81, 6);
    // Tap 2BA ≈ 4.0 mm (ministeam.net, check-values.md §11 [published]); ±0.15 mm between tables.
    expect(Math.abs(res.body.tapDrill.stock.mm - 4.0)).toBeLessThanOrEqual(0.15);
    expect(res.body.clearance.free.mm).toBeGreaterThan(4.7);
    expect(res.body.source).toMatch(/BS 93/);
  });

  it('M5: 0.8 mm pitch, 4.2 mm tap drill, clearance 5.3 / 5.5', async () => {
    const res = await builder.get('/api/reference/threads/M5').expect(200);
    // ISO 261/262 coarse pitch and ISO 2306-type tap drill; ISO 273 fine/medium (check-values.md §2.2).
    expect(res.body.pitchMm).toBeCloseTo(0.8, 9);
    expect(res.body.tapDrill.stock.mm).toBeCloseTo(4.2, 9);
    expect(res.body.clearance.close.mm).toBeCloseTo(5.3, 9);
    expect(res.body.clearance.free.mm).toBeCloseTo(5.5, 9);
  });

  it('1/4-20 UNC: #7 tap drill; 1/4x40 ME is recognised', async () => {
    // Machinery's Handbook 31st ed. Table 4 (check-values.md §3 [published]): 1/4-20 → #7 (0.201 in).
    const unc = await builder
      .get(`/api/reference/threads/${encodeURIComponent('1/4-20 UNC')}`)
      .expect(200);
    expect(unc.body.tapDrill.stock.label).toBe('#7');
    const me = await builder
      .get(`/api/reference/threads/${encodeURIComponent('1/4x40 ME')}`)
      .expect(200);
    expect(me.body.tpi).toBe(40);
  });

  it('an unknown size is 404, gibberish is 400', async () => {
    expect((await builder.get('/api/reference/threads/M7.3')).status).toBe(404);
    const bad = await builder.get('/api/reference/threads/banana');
    expect(bad.status).toBe(400);
    expect(bad.body.error.message).toBeTruthy();
  });
});
