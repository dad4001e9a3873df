// The engine's size limits at the API (issue 14): a model over a limit is refused with 413 (or
// 422 for too much work) naming the limit; an expression too deep or too wide is an engine error
// in the answer; no posted, saved or stored expression makes the solve, the save or the shop
// sheet answer 500.
import fc from 'fast-check';
import { eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { MODEL_LIMITS } from '@shared/engine';
import { projectModels } from '../../server/db/schema';
import { createTestApp, TestClient, type TestApp } from '../helpers/app';
import { expression } from '../helpers/expressions';

let t: TestApp;
let builder: TestClient;
let projectId = '';

beforeAll(async () => {
  // Hundreds of solves from one user: the per-user solve limit is not under test here.
  t = await createTestApp({ solvesPerMinute: 100_000 });
  builder = new TestClient(t.app);
  await builder.register('limits@example.com');
  projectId = (await builder.post('/api/projects', { name: 'Limits' }).expect(201)).body.id;
});
afterAll(() => t?.close());

const stated = (name: string, value = 1) => ({ name, kind: 'stated', value, tol: 0.01 });

function model(relations: Array<{ id: string; expr: string }>, extra: object = {}) {
  return {
    format: 'fairsheet.model',
    version: 1,
    units: 'mm',
    dimensions: [stated('a0'), stated('a1', 2), stated('a2', 3), { name: 'x', kind: 'derived' }],
    relations,
    ...extra,
  };
}

/** The 1 MB `max(a0, a1, …)` body of issue 14. */
function megabyteMax(): string {
  const args: string[] = [];
  let length = 0;
  for (let i = 0; length < 1_000_000; i++) {
    args.push(`a${i % 3}`);
    length += 4;
  }
  return `x = max(${args.join(', ')})`;
}

/** The 5,000-term sum of issue 14. */
const sum5000 = `x = ${Array.from({ length: 5000 }, (_, i) => `a${i % 3}`).join(' + ')}`;

async function save(m: object) {
  const current = await builder.get(`/api/projects/${projectId}/model`).expect(200);
  return builder.put(`/api/projects/${projectId}/model`, {
    revision: current.body.revision,
    model: m,
  });
}

describe('POST /api/solve over a limit', () => {
  it('answers the 1 MB max(a0, a1, …) with 413 naming the relation character limit', async () => {
    const expr = megabyteMax();
    expect(expr.length).toBeGreaterThan(1_000_000);
    const res = await builder.post('/api/solve', { model: model([{ id: 'r', expr }]) });
    expect(res.status).toBe(413);
    expect(res.body.error.code).toBe('payload_too_large');
    expect(res.body.error.message).toMatch(
      /^Over a limit: a relation has at most 4,000 characters; this one has [\d,]+ \(model\.relations\.0\.expr\)\.$/,
    );
    expect(res.body.error.details.limit).toBe('relationCharacters');
  });

  it('answers the 5,000-term sum with 413 naming the limit', async () => {
    const res = await builder.post('/api/solve', { model: model([{ id: 'r', expr: sum5000 }]) });
    expect(res.status).toBe(413);
    expect(res.body.error.message).toContain(
      `a relation has at most 4,000 characters; this one has ${sum5000.length.toLocaleString('en-GB')}`,
    );
  });

  it('answers more dimensions than the limit with 413, even with other issues in the body', async () => {
    const dimensions = Array.from({ length: MODEL_LIMITS.dimensions + 1 }, (_, i) => ({
      name: `d${i}`,
      kind: 'derived',
    }));
    const res = await builder.post('/api/solve', {
      model: { ...model([]), version: 2, dimensions },
    });
    expect(res.status).toBe(413);
    expect(res.body.error.message).toBe(
      'Over a limit: a model has at most 10,000 dimensions; this one has 10,001 (model.dimensions).',
    );
  });

  it('answers a Monte Carlo of too many samples × dimensions with 422 naming the limit', async () => {
    // The 800-dimension, 20,000-sample request of issue 14.
    const dimensions = Array.from({ length: 800 }, (_, i) => stated(`d${i}`));
    const res = await builder.post('/api/solve', {
      model: { ...model([]), dimensions },
      monteCarlo: { samples: 20_000, seed: 1 },
    });
    expect(res.status).toBe(422);
    expect(res.body.error).toMatchObject({
      code: 'unprocessable',
      details: { limit: 'monteCarloWork' },
    });
    expect(res.body.error.message).toMatch(/at most 2,000,000 samples × dimensions/);
  });

  it('answers an expression nested too deep with 200 and the engine error naming the limit', async () => {
    const expr = `x = ${'('.repeat(65)}a0${')'.repeat(65)}`;
    const res = await builder.post('/api/solve', { model: model([{ id: 'r', expr }]) }).expect(200);
    expect(res.body.status).toBe('invalid');
    expect(res.body.errors).toEqual([
      expect.objectContaining({
        code: 'over-limit',
        relation: 'r',
        at: 68,
        message: 'parentheses are nested more than 64 deep',
      }),
    ]);
  });
});

describe('PUT /api/projects/:projectId/model over a limit', () => {
  it('answers the 5,000-term sum with 413 and keeps the stored model', async () => {
    const before = await builder.get(`/api/projects/${projectId}/model`).expect(200);
    const res = await save(model([{ id: 'r', expr: sum5000 }]));
    expect(res.status).toBe(413);
    expect(res.body.error.details.limit).toBe('relationCharacters');
    const after = await builder.get(`/api/projects/${projectId}/model`).expect(200);
    expect(after.body.revision).toBe(before.body.revision);
  });

  it('answers a feature position over its character limit with 413 naming the field', async () => {
    const res = await save(
      model([], {
        parts: [{ id: 'p', name: 'Plate' }],
        features: [{ id: 'f', part: 'p', kind: 'hole', x: 'a0 + '.repeat(500) + 'a1', y: 0 }],
      }),
    );
    expect(res.status).toBe(413);
    expect(res.body.error.message).toMatch(
      /an expression has at most 2,000 characters; this one has 2,502 \(model\.features\.0\.x\)/,
    );
  });
});

describe('the shop sheet of a stored model past the limits', () => {
  // A model saved before the limits existed: written to the table directly, as a save then did
  // (before features were stored with a revision, so with none).
  async function store(m: object) {
    await t.database.db
      .update(projectModels)
      .set({ model: m, features: null, revision: sql`${projectModels.revision} + 1` })
      .where(eq(projectModels.projectId, projectId));
  }

  const positions = {
    '5,000-term sum': sum5000.slice(4),
    '150,000-argument max': `max(${Array.from({ length: 150_000 }, (_, i) => `a${i % 3}`).join(',')})`,
    '300-term sum (inside the characters, past the depth)': Array(300).fill('a1').join('+'),
  };

  for (const [what, x] of Object.entries(positions)) {
    it(`answers JSON, CSV and PDF (not 500) for a feature positioned by a ${what}`, async () => {
      await store(
        model([], {
          parts: [{ id: 'p', name: 'Plate' }],
          features: [
            { id: 'bad', part: 'p', kind: 'hole', x, y: 0 },
            { id: 'good', part: 'p', kind: 'hole', x: 'a1', y: 'a2' },
          ],
        }),
      );
      const url = `/api/projects/${projectId}`;
      const json = await builder.get(`${url}/shop-sheet`);
      expect(json.status).toBe(200);
      const rows: Array<{ feature: string; errors: string[]; x: { value: number | null } }> =
        json.body.groups.flatMap((g: { rows: unknown[] }) => g.rows);
      if (x.length > MODEL_LIMITS.expressionCharacters) {
        // Past the schema: the model cannot be read, and the sheet says so by its status.
        expect(json.body.status).toBe('invalid');
        expect(rows).toEqual([]);
      } else {
        // Read, the deep position refused beside its feature, the others positioned.
        expect(rows.find((r) => r.feature === 'bad')?.errors).toEqual([
          expect.stringMatching(/^x: more than 200 operations inside one another/),
        ]);
        expect(rows.find((r) => r.feature === 'good')?.x.value).toBeCloseTo(2, 12);
      }
      expect((await builder.get(`${url}/shop-sheet.csv`)).status).toBe(200);
      expect((await builder.get(`${url}/shop-sheet.pdf`)).status).toBe(200);
    });
  }
});

describe('generated expressions of any depth and width', () => {
  it('never make POST /api/solve or a model save answer 500', async () => {
    const statuses = new Map<number, number>();
    await fc.assert(
      fc.asyncProperty(expression, fc.boolean(), async (expr, feature) => {
        const m = feature
          ? model([], {
              parts: [{ id: 'p', name: 'Plate' }],
              features: [{ id: 'f', part: 'p', kind: 'hole', x: expr, y: 0 }],
            })
          : model([{ id: 'r', expr: `x = ${expr}` }]);
        const solved = await builder.post('/api/solve', { model: m });
        const saved = await save(m);
        for (const res of [solved, saved]) {
          statuses.set(res.status, (statuses.get(res.status) ?? 0) + 1);
          expect([200, 400, 413]).toContain(res.status);
          if (res.status !== 200) expect(res.body.error.message.length).toBeGreaterThan(0);
        }
      }),
      { numRuns: 400 },
    );
    // Both answers were met: the generator reaches past the limits and inside them.
    expect(statuses.get(200)).toBeGreaterThan(0);
    expect(statuses.get(413)).toBeGreaterThan(0);
  }, 300_000);

  it('10,000 generated expressions posted to POST /api/solve: none answers 500', async () => {
    const statuses = new Map<number, number>();
    await fc.assert(
      fc.asyncProperty(expression, async (expr) => {
        const res = await builder.post('/api/solve', {
          model: model([{ id: 'r', expr: `x = ${expr}` }]),
        });
        statuses.set(res.status, (statuses.get(res.status) ?? 0) + 1);
        expect([200, 400, 413]).toContain(res.status);
        if (res.status !== 200) expect(res.body.error.message.length).toBeGreaterThan(0);
        else expect(res.body.values.x).toBeDefined();
      }),
      { numRuns: 10_000 },
    );
    // The generator reaches both sides of the limits: solved answers and refusals.
    expect(statuses.get(200)).toBeGreaterThan(1000);
    expect(statuses.get(413)).toBeGreaterThan(1000);
  }, 600_000);
});
