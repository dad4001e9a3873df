// Garbage bodies for the routes that take a model as JSON: PUT /api/projects/:id/model and
// POST /api/solve. Each answers 400 with the fields it refuses (413 or 422 naming the limit when
// one of the engine's size limits is among them; never a 500), or takes the body.
//
// Through supertest a request costs 10–20 ms here (session lookup in PostgreSQL, CSRF, the JSON
// parser, the route), so 10,000 per route would add minutes. Instead, per route:
//   - 10,000 bodies go through the route's own validation middleware (`validate` with the same
//     shared/api schema), and every body it lets through is solved as the route solves it and
//     cast to jsonb by the real PostgreSQL, as the save stores it;
//   - 300 bodies, and 60 texts that are not JSON, go through the real HTTP route.
// The project import route takes a zip, not JSON; 30 zips whose model.json is a garbage body
// go through it. fast-check prints the seed and path of a failure; pass them to fc.assert to
// replay it.
import fc from 'fast-check';
import type { Request, Response } from 'express';
import yazl from 'yazl';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { saveModelBody, solveBody } from '@shared/api';
import { diffModels, solveModel, type FairsheetModel } from '@shared/engine';
import { AppError } from '../../server/http/errors';
import { validate } from '../../server/http/validate';
import { createTestApp, TestClient, type TestApp } from '../helpers/app';

let t: TestApp;
let client: TestClient;
let projectId: string;

beforeAll(async () => {
  // Garbage counts against the solve rate limit like anything else; lift it for this file.
  t = await createTestApp({ solvesPerMinute: 1_000_000 });
  client = new TestClient(t.app);
  await client.register('fuzz.owner@example.com');
  projectId = (
    await client.post('/api/projects', { name: 'Garbage in', displayUnit: 'in' }).expect(201)
  ).body.id;
});
afterAll(() => t.close());

type Json = null | boolean | number | string | Json[] | { [key: string]: Json };

// Two valid models to mutate: a chain in inches, and a part with a feature in millimetres.
const chainModel: Json = {
  format: 'fairsheet.model',
  version: 1,
  units: 'in',
  dimensions: [
    { name: 'overall', kind: 'stated', value: '6 1/4', tol: '0.005', note: 'from sheet 1' },
    { name: 'boss', kind: 'stated', value: '0.750', tolPlus: '0.002', tolMinus: '0.001' },
    { name: 'web', kind: 'scaled', value: 1.5 },
    { name: 'slot', kind: 'derived', guess: '3' },
  ],
  relations: [{ id: 'r1', expr: 'overall = boss + slot + web', enabled: true }],
};
const partModel: Json = {
  format: 'fairsheet.model',
  version: 1,
  units: 'mm',
  dimensions: [
    { name: 'pcd', kind: 'stated', value: '40 mm' },
    { name: 'edge', kind: 'assumed', value: 6, quantity: 'length' },
  ],
  relations: [],
  parts: [{ id: 'flange', name: 'Steam flange', material: 'brass', quantity: 2, pressure: true }],
  features: [
    {
      id: 'bolts',
      part: 'flange',
      kind: 'tapped',
      x: 'pcd / 2 + edge',
      y: 25,
      thread: 'M4',
      pattern: { type: 'circle', count: 4, pcd: 'pcd' },
    },
  ],
};

// Strings a database, a parser or a browser could choke on.
const nasty = fc.constantFrom(
  '',
  ' ',
  '\u0000',
  'a\u0000b',
  '\ud800',
  'x\udc00y',
  '😀',
  'x'.repeat(5000),
  '__proto__',
  'constructor',
  '<script>alert(1)</script>',
  "'; drop table projects; --",
  '1 3/16"',
  '9'.repeat(400),
  'x = a.b.c',
  'x = toString(a)',
  '${7*7}',
  '%00',
  '../../etc/passwd',
);
const garbageValue: fc.Arbitrary<Json> = fc.oneof(
  nasty,
  fc.jsonValue({ maxDepth: 3 }) as fc.Arbitrary<Json>,
  fc.constantFrom<Json>(0, -1, 1e308, 2 ** 53, 0.1, -0.5, true, false, null, [], {}),
);

interface Mutation {
  at: number;
  op: 'replace' | 'delete' | 'add' | 'wrap' | 'stringify' | 'duplicate';
  key: string;
  value: Json;
}
const mutation: fc.Arbitrary<Mutation> = fc.record({
  at: fc.nat(),
  op: fc.constantFrom('replace', 'delete', 'add', 'wrap', 'stringify', 'duplicate'),
  key: fc.oneof(nasty, fc.constantFrom('extra', 'format', 'units', 'name', 'kind', 'value')),
  value: garbageValue,
});

/** Every place in a JSON value, as [container, key]. */
function places(root: { body: Json }): Array<[Record<string, Json> | Json[], string | number]> {
  const out: Array<[Record<string, Json> | Json[], string | number]> = [];
  const walk = (holder: Record<string, Json> | Json[], key: string | number) => {
    out.push([holder, key]);
    const v = (holder as Record<string, Json>)[key as string];
    if (Array.isArray(v)) v.forEach((_, i) => walk(v, i));
    else if (v && typeof v === 'object') for (const k of Object.keys(v)) walk(v, k);
  };
  walk(root as unknown as Record<string, Json>, 'body');
  return out;
}

function mutate(body: Json, mutations: Mutation[]): Json {
  const root = { body: structuredClone(body) };
  for (const m of mutations) {
    // A copy: constantFrom hands out the same [] and {} every time, and one pushed into
    // itself would make the body circular (and change the constant for later cases).
    const value = structuredClone(m.value);
    const all = places(root);
    const [holder, key] = all[m.at % all.length]!;
    const current = (holder as Record<string, Json>)[key as string]!;
    switch (m.op) {
      case 'replace':
        (holder as Record<string, Json>)[key as string] = value;
        break;
      case 'delete':
        if (Array.isArray(holder)) holder.splice(key as number, 1);
        else if (holder !== (root as unknown)) delete holder[key as string];
        break;
      case 'add':
        // defineProperty, so a key of `__proto__` is sent as a key, not taken as a prototype.
        if (Array.isArray(current)) current.push(value);
        else if (current && typeof current === 'object')
          Object.defineProperty(current, m.key, {
            value,
            enumerable: true,
            writable: true,
            configurable: true,
          });
        break;
      case 'wrap':
        (holder as Record<string, Json>)[key as string] = [current];
        break;
      case 'stringify':
        (holder as Record<string, Json>)[key as string] = JSON.stringify(current) ?? null;
        break;
      case 'duplicate':
        if (Array.isArray(current) && current.length)
          current.push(structuredClone(current[m.at % current.length]!));
        break;
    }
  }
  return root.body;
}

const REVISION = '<current revision>';

/** Bodies of one route: valid ones, valid ones with 1–4 mutations, and any JSON at all. */
function garbageBodies(wrap: (model: Json) => Json): fc.Arbitrary<Json> {
  const valid = fc.constantFrom(chainModel, partModel).map(wrap);
  return fc.oneof(
    { weight: 1, arbitrary: valid },
    {
      weight: 12,
      arbitrary: fc
        .tuple(valid, fc.array(mutation, { minLength: 1, maxLength: 4 }))
        .map(([b, ms]) => mutate(b, ms)),
    },
    { weight: 2, arbitrary: fc.jsonValue({ maxDepth: 4 }) as fc.Arbitrary<Json> },
  );
}
const saveBodies = garbageBodies((model) => ({ revision: REVISION, model, note: 'fuzz' }));
const solveBodies = garbageBodies((model) => ({
  model,
  monteCarlo: { samples: 50, seed: 7 },
}));

/** Texts sent as application/json that are not JSON, or not a JSON object. */
const notJson = fc.oneof(
  fc.constantFrom(
    '{',
    '{"model":',
    '[1,]',
    "{'model': 1}",
    '{"model": 1e999}',
    '{"revision": 0, "model": NaN}',
    'null',
    '"a string"',
    '42',
    '\u0000',
    '[]',
    '{"model": {"format": "fairsheet.model"}}',
    '['.repeat(10_000) + ']'.repeat(10_000),
  ),
  fc.string({ unit: 'binary', maxLength: 200 }),
);

function withRevision(body: Json, revision: number): Json {
  if (body && typeof body === 'object' && !Array.isArray(body) && body.revision === REVISION)
    return { ...body, revision };
  return body;
}

/** The route's own validation, called as Express calls it. */
function runValidation(
  middleware: ReturnType<typeof validate>,
  body: unknown,
): { passed: true; body: unknown } | { passed: false; error: unknown } {
  const req = { params: {}, query: {}, body } as unknown as Request;
  const res = { locals: {} } as unknown as Response;
  let outcome: { passed: true; body: unknown } | { passed: false; error: unknown } | undefined;
  middleware(req, res, (err?: unknown) => {
    outcome = err ? { passed: false, error: err } : { passed: true, body: req.body };
  });
  if (!outcome) throw new Error('validate() neither passed nor refused the body');
  return outcome;
}

function expectReasons(error: unknown): void {
  expect(error).toBeInstanceOf(AppError);
  const e = error as AppError;
  expect([400, 413, 422]).toContain(e.status);
  if (e.status === 400) expect(e.message).toMatch(/^Please check: .+\.$/);
  else expect(e.message).toMatch(/^Over a limit: .+ at most .+\.$/);
  const fields = (e.details as { fields: Array<{ path: string; message: string }> }).fields;
  expect(fields.length).toBeGreaterThan(0);
  for (const f of fields) {
    expect(typeof f.path).toBe('string');
    expect(f.message.length).toBeGreaterThan(0);
  }
}

/** The answer to a refused body: 400 with the fields and why (413 or 422 over a size limit). */
function expectRefusal(res: { status: number; body: Record<string, unknown> }): void {
  const codes: Record<number, string> = {
    400: 'bad_request',
    413: 'payload_too_large',
    422: 'unprocessable',
  };
  const error = res.body.error as { code: string; message: string; details?: unknown };
  expect(error.code).toBe(codes[res.status]);
  expect(error.message.length).toBeGreaterThan(0);
}

const statuses = ['invalid', 'contradictory', 'incomplete', 'solved'];

describe('model bodies against the route validation (property, 10,000 cases each)', () => {
  it('PUT /model bodies: refused with field reasons, or solved, diffed and stored as jsonb without error', async () => {
    const middleware = validate({ body: saveModelBody });
    const seen = { refused: 0, passed: 0 };
    await fc.assert(
      fc.asyncProperty(saveBodies, async (raw) => {
        const body = withRevision(raw, 0);
        const outcome = runValidation(middleware, body);
        if (!outcome.passed) {
          expectReasons(outcome.error);
          seen.refused++;
          return;
        }
        seen.passed++;
        // What the route's service does with an accepted body, short of the transaction.
        const { model } = outcome.body as { model: FairsheetModel };
        const result = solveModel(model, { timeLimitMs: 2000 });
        expect(statuses).toContain(result.status);
        const diff = diffModels(model, model);
        // drizzle hands jsonb to PostgreSQL as JSON.stringify of the value.
        await t.database.pool.query('select $1::jsonb, $2::jsonb, $3::jsonb', [
          JSON.stringify(model),
          JSON.stringify(result),
          JSON.stringify(diff),
        ]);
      }),
      { numRuns: 10_000 },
    );
    expect(seen.refused).toBeGreaterThan(1000);
    expect(seen.passed).toBeGreaterThan(1000);
  }, 600_000);

  it('POST /solve bodies: refused with field reasons, or solved within the route’s time limit', () => {
    const middleware = validate({ body: solveBody });
    const seen = { refused: 0, passed: 0 };
    fc.assert(
      fc.property(solveBodies, (body) => {
        const outcome = runValidation(middleware, body);
        if (!outcome.passed) {
          expectReasons(outcome.error);
          seen.refused++;
          return;
        }
        seen.passed++;
        const { model, monteCarlo } = outcome.body as {
          model: FairsheetModel;
          monteCarlo?: { samples: number; seed: number };
        };
        const result = solveModel(model, { timeLimitMs: 2000, monteCarlo });
        expect(statuses).toContain(result.status);
        expect(() => JSON.stringify(result)).not.toThrow();
      }),
      { numRuns: 10_000 },
    );
    expect(seen.refused).toBeGreaterThan(1000);
    expect(seen.passed).toBeGreaterThan(1000);
  }, 600_000);
});

describe('model bodies through the real routes (property, 300 cases each)', () => {
  it('PUT /api/projects/:id/model: 400 with reasons, 200 or 409, never anything else', async () => {
    let revision = (await client.get(`/api/projects/${projectId}/model`).expect(200)).body
      .revision as number;
    await fc.assert(
      fc.asyncProperty(saveBodies, async (raw) => {
        const body = withRevision(raw, revision);
        const res = await client.agent
          .put(`/api/projects/${projectId}/model`)
          .set('X-CSRF-Token', client.csrf)
          .set('Content-Type', 'application/json')
          .send(JSON.stringify(body));
        expect([200, 400, 409, 413], JSON.stringify(res.body).slice(0, 500)).toContain(res.status);
        if (res.status === 400 || res.status === 413) expectRefusal(res);
        if (res.status === 200) revision = res.body.revision;
        if (res.status === 409) expect(res.body.error.details.currentRevision).toBe(revision);
        // Anything the schema refuses must be refused by the route.
        if (!saveModelBody.safeParse(body).success) expect([400, 413]).toContain(res.status);
      }),
      { numRuns: 300 },
    );
  }, 600_000);

  it('POST /api/solve: 400 with reasons or 200 with a result, never anything else', async () => {
    await fc.assert(
      fc.asyncProperty(solveBodies, async (body) => {
        const res = await client.agent
          .post('/api/solve')
          .set('X-CSRF-Token', client.csrf)
          .set('Content-Type', 'application/json')
          .send(JSON.stringify(body));
        expect([200, 400, 413, 422], JSON.stringify(res.body).slice(0, 500)).toContain(res.status);
        if (res.status === 200) expect(statuses).toContain(res.body.status);
        else expectRefusal(res);
        if (!solveBody.safeParse(body).success) expect([400, 413, 422]).toContain(res.status);
      }),
      { numRuns: 300 },
    );
  }, 600_000);

  it('texts that are not a JSON object, to both routes: 400 saying so', async () => {
    await fc.assert(
      fc.asyncProperty(notJson, fc.boolean(), async (text, toSave) => {
        const req = toSave
          ? client.agent.put(`/api/projects/${projectId}/model`)
          : client.agent.post('/api/solve');
        const res = await req
          .set('X-CSRF-Token', client.csrf)
          .set('Content-Type', 'application/json')
          .send(text);
        expectRefusal(res);
      }),
      { numRuns: 60 },
    );
  }, 600_000);

  it('POST /api/projects/import with a zip whose model.json is a garbage body: 422 or 201, never a 500', async () => {
    const zipOf = (files: Record<string, string>) =>
      new Promise<Buffer>((resolve) => {
        const zip = new yazl.ZipFile();
        for (const [name, body] of Object.entries(files)) zip.addBuffer(Buffer.from(body), name);
        zip.end();
        const chunks: Buffer[] = [];
        zip.outputStream.on('data', (c: Buffer) => chunks.push(c));
        zip.outputStream.on('end', () => resolve(Buffer.concat(chunks)));
      });
    const manifest = JSON.stringify({
      format: 'fairsheet.bundle',
      version: 1,
      exportedAt: '2024-06-01T00:00:00Z',
      project: { name: 'Imported', displayUnit: 'in', modelScale: null },
      files: [],
    });
    await fc.assert(
      fc.asyncProperty(saveBodies, async (body) => {
        const model = body && typeof body === 'object' && 'model' in body ? body.model : body;
        const projects = Number(
          (await t.database.pool.query('select count(*) from projects')).rows[0].count,
        );
        const res = await client.agent
          .post('/api/projects/import')
          .set('X-CSRF-Token', client.csrf)
          .attach(
            'file',
            await zipOf({
              'manifest.json': manifest,
              'model.json': JSON.stringify(model),
              'sheets.json': '[]',
              'corrections.json': '[]',
              'comments.json': '[]',
            }),
            'garbage.fairsheet.zip',
          );
        expect([201, 422], JSON.stringify(res.body).slice(0, 500)).toContain(res.status);
        const after = Number(
          (await t.database.pool.query('select count(*) from projects')).rows[0].count,
        );
        if (res.status === 422) {
          expect(res.body.error.message).toMatch(/^This bundle cannot be imported: model\.json/);
          expect(after).toBe(projects);
        } else expect(after).toBe(projects + 1);
      }),
      { numRuns: 30 },
    );
  }, 600_000);
});
