import yazl from 'yazl';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { solveModel } from '@shared/engine';
import {
  demoBuilder,
  demoChecker,
  demoPassword,
  demoProjectName,
  seedDemo,
} from '../../server/demo/seed';
import { createTestApp, testHasher, TestClient, type TestApp } from '../helpers/app';

let t: TestApp;
let builder: TestClient;
let other: TestClient;
let demoId: string;
let bundle: Buffer;

const binary = (
  res: import('superagent').Response,
  cb: (err: Error | null, body: Buffer) => void,
) => {
  const chunks: Buffer[] = [];
  res.on('data', (c: Buffer) => chunks.push(c));
  res.on('end', () => cb(null, Buffer.concat(chunks)));
};

function zipOf(files: Record<string, Buffer | string>): Promise<Buffer> {
  const zip = new yazl.ZipFile();
  for (const [name, body] of Object.entries(files)) zip.addBuffer(Buffer.from(body), name);
  zip.end();
  return new Promise((resolve) => {
    const chunks: Buffer[] = [];
    zip.outputStream.on('data', (c: Buffer) => chunks.push(c));
    zip.outputStream.on('end', () => resolve(Buffer.concat(chunks)));
  });
}

const importBundle = (c: TestClient, bytes: Buffer, name = 'project.fairsheet.zip') =>
  c.agent.post('/api/projects/import').set('X-CSRF-Token', c.csrf).attach('file', bytes, name);

const projectCount = async () =>
  Number((await t.database.pool.query('select count(*) from projects')).rows[0].count);

beforeAll(async () => {
  t = await createTestApp();
  await seedDemo(t.database.db, testHasher, t.storage);
  builder = new TestClient(t.app);
  await builder.login(demoBuilder.email, demoPassword);
  other = new TestClient(t.app);
  await other.register('restorer@example.com', 'restorer password', 'Sam Restorer');
  demoId = (await builder.get('/api/projects')).body.projects.find(
    (p: { name: string }) => p.name === demoProjectName,
  ).id;
  const res = await builder
    .get(`/api/projects/${demoId}/export`)
    .buffer(true)
    .parse(binary)
    .expect(200);
  expect(res.headers['content-type']).toBe('application/zip');
  expect(res.headers['content-disposition']).toMatch(/\.fairsheet\.zip/);
  bundle = res.body as Buffer;
});
afterAll(() => t.close());

describe('project bundles', () => {
  it('export then import gives an equal project: same model, same derived values, same files', async () => {
    const imported = await importBundle(other, bundle);
    expect(imported.status).toBe(201);
    expect(imported.body).toMatchObject({
      name: demoProjectName,
      role: 'owner',
      displayUnit: 'in',
      modelScale: '1:11.3',
    });
    const id = imported.body.id;

    const [a, b] = await Promise.all([
      builder.get(`/api/projects/${demoId}/model`),
      other.get(`/api/projects/${id}/model`),
    ]);
    const [sa, sb] = await Promise.all([
      builder.get(`/api/projects/${demoId}/sheets`),
      other.get(`/api/projects/${id}/sheets`),
    ]);
    const sheetMap = new Map<string, string>(
      sa.body.sheets.map((s: { id: string }, i: number) => [s.id, sb.body.sheets[i].id]),
    );
    const strip = (m: { dimensions: { sheet?: string }[] }, map?: Map<string, string>) => ({
      ...m,
      dimensions: m.dimensions.map((d) =>
        d.sheet && map?.has(d.sheet) ? { ...d, sheet: map.get(d.sheet) } : d,
      ),
    });
    expect(b.body.model).toEqual(strip(a.body.model, sheetMap));
    const ra = solveModel(a.body.model);
    const rb = solveModel(b.body.model);
    expect(Object.keys(rb.values).length).toBeGreaterThan(20);
    for (const [name, v] of Object.entries(ra.values)) {
      if (v.value === null) expect(rb.values[name]!.value).toBeNull();
      else expect(rb.values[name]!.value).toBeCloseTo(v.value, 12);
    }

    const sums = (list: { file: { sha256: string } }[]) => list.map((s) => s.file.sha256).sort();
    expect(sums(sb.body.sheets)).toEqual(sums(sa.body.sheets));
    expect(sb.body.sheets.map((s: { title: string }) => s.title)).toEqual(
      sa.body.sheets.map((s: { title: string }) => s.title),
    );
    expect(sb.body.sheets.map((s: { calibration: unknown }) => s.calibration)).toEqual(
      sa.body.sheets.map((s: { calibration: unknown }) => s.calibration),
    );
    expect(sb.body.sheets.map((s: { pins: unknown }) => s.pins)).toEqual(
      sa.body.sheets.map((s: { pins: unknown }) => s.pins),
    );

    const ca = (await builder.get(`/api/projects/${demoId}/corrections`)).body.corrections;
    const cb = (await other.get(`/api/projects/${id}/corrections`)).body.corrections;
    expect(cb.map((c: { wrong: string; corrected: string }) => [c.wrong, c.corrected])).toEqual(
      ca.map((c: { wrong: string; corrected: string }) => [c.wrong, c.corrected]),
    );
    const file = await other
      .get(`/api/projects/${id}/sheets/${sb.body.sheets[0].id}/file`)
      .expect(200);
    expect(file.headers.etag).toContain(sb.body.sheets[0].file.sha256);
  });

  it('export then import keeps everything the project holds: every revision, checks, activity, comments with their mentions and authors, corrections, members as invitations', async () => {
    // One more revision and a comment that mentions the checker (findMentions: '@Jo').
    const current = (await builder.get(`/api/projects/${demoId}/model`)).body;
    const model = structuredClone(current.model);
    model.dimensions[0].note = 'checked against the casting';
    await builder
      .put(`/api/projects/${demoId}/model`, { revision: current.revision, model, note: 'A note' })
      .expect(200);
    await builder
      .post(`/api/projects/${demoId}/comments`, {
        targetKind: 'dimension',
        targetId: 'horn2_x',
        body: '@Jo this one moved with the bolt row',
      })
      .expect(201);
    const res = await builder
      .get(`/api/projects/${demoId}/export`)
      .buffer(true)
      .parse(binary)
      .expect(200);
    const imported = await importBundle(other, res.body as Buffer);
    expect(imported.status).toBe(201);
    const id = imported.body.id;
    const both = async (url: string) => {
      const [a, b] = await Promise.all([
        builder.get(`/api/projects/${demoId}${url}`).expect(200),
        other.get(`/api/projects/${id}${url}`).expect(200),
      ]);
      return [a.body, b.body];
    };

    // The whole history: the demo's two revisions and this test's save (3), authors as recorded.
    const [ha, hb] = await both('/history');
    const history = (h: { entries: { revision: number; summary: string; user: unknown }[] }) =>
      h.entries.map((e) => ({
        revision: e.revision,
        summary: e.summary,
        by: (e.user as { name: string } | null)?.name,
      }));
    expect(ha.entries.length).toBeGreaterThanOrEqual(3);
    expect(history(hb)).toEqual(history(ha));
    expect(history(hb).map((e) => e.by)).toContain(demoBuilder.name);
    const [ma, mb] = await both('/model');
    expect(mb.revision).toBe(ma.revision);

    const [ca, cb] = await both('/checks');
    const checks = (c: { checks: { dimension: string; state: string; value: number }[] }) =>
      c.checks.map((x) => ({
        dimension: x.dimension,
        state: x.state,
        value: x.value,
        by: (x as unknown as { checkedBy: { name: string } }).checkedBy.name,
      }));
    expect(ca.checks.length).toBeGreaterThanOrEqual(2);
    expect(checks(cb)).toEqual(checks(ca));
    expect(cb.summary).toEqual(ca.summary);

    const [cma, cmb] = await both('/comments');
    const comments = (c: {
      comments: { body: string; mentions: string[]; author: { name: string }; createdAt: string }[];
    }) =>
      c.comments.map((x) => ({
        body: x.body,
        mentions: x.mentions,
        by: x.author.name,
        at: x.createdAt,
      }));
    expect(comments(cmb)).toEqual(comments(cma));
    expect(comments(cmb).at(-1)).toMatchObject({
      by: demoBuilder.name,
      mentions: [demoChecker.name],
    });

    const [cra, crb] = await both('/corrections');
    const corrections = (c: { corrections: { wrong: string; author: { name: string } }[] }) =>
      c.corrections.map((x) => ({ wrong: x.wrong, by: x.author.name }));
    expect(corrections(crb)).toEqual(corrections(cra));
    expect(corrections(crb)[0]!.by).toBe(demoBuilder.name);

    // The time line as it was, then the import and the invitations it sent.
    const [aa, ab] = await both('/activity?limit=500');
    const line = (a: { entries: { summary: string; user: { name: string } | null }[] }) =>
      a.entries.map((e) => `${e.user?.name ?? ''}: ${e.summary}`);
    expect(line(ab)).toEqual(expect.arrayContaining(line(aa)));
    expect(line(ab)).toContain('Sam Restorer: project imported from a bundle');

    // Members come back as invitations to the same addresses and roles, not as members.
    const members = (await builder.get(`/api/projects/${demoId}/members`)).body.members as {
      email: string;
      role: string;
    }[];
    const invited = (await other.get(`/api/projects/${id}/invitations`).expect(200)).body
      .invitations as { email: string; role: string }[];
    expect(invited.map((i) => [i.email, i.role]).sort()).toEqual(
      members.map((m) => [m.email, m.role]).sort(),
    );
    const theirMembers = (await other.get(`/api/projects/${id}/members`)).body.members;
    expect(theirMembers.map((m: { email: string }) => m.email)).toEqual(['restorer@example.com']);
  });

  it('refuses a file that is not a zip with 422 and creates nothing', async () => {
    const before = await projectCount();
    const res = await importBundle(other, Buffer.from('this is not a zip at all'), 'notes.zip');
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(/not a readable zip/);
    expect(await projectCount()).toBe(before);
  });

  it('refuses a truncated bundle with 422 and creates nothing', async () => {
    const before = await projectCount();
    const res = await importBundle(other, bundle.subarray(0, Math.floor(bundle.length / 2)));
    expect(res.status).toBe(422);
    expect(await projectCount()).toBe(before);
  });

  it('refuses a bundle whose file does not match its checksum, naming the file', async () => {
    const sha = 'a'.repeat(64);
    const damaged = await zipOf({
      'manifest.json': JSON.stringify({
        format: 'fairsheet.bundle',
        version: 1,
        exportedAt: new Date().toISOString(),
        project: { name: 'X', displayUnit: 'in', modelScale: null },
        files: [{ sha256: sha, mimeType: 'image/png', sizeBytes: 3 }],
      }),
      'model.json': JSON.stringify({
        format: 'fairsheet.model',
        version: 1,
        units: 'in',
        dimensions: [],
      }),
      'sheets.json': '[]',
      'corrections.json': '[]',
      'comments.json': '[]',
      [`files/${sha}`]: 'abc',
    });
    const before = await projectCount();
    const res = await importBundle(other, damaged);
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(/does not match its checksum/);
    expect(await projectCount()).toBe(before);
  });

  it('refuses a bundle with an invalid model, saying where', async () => {
    const bad = await zipOf({
      'manifest.json': JSON.stringify({
        format: 'fairsheet.bundle',
        version: 1,
        exportedAt: 'today',
        project: { name: 'X', displayUnit: 'in', modelScale: null },
        files: [],
      }),
      'model.json': JSON.stringify({
        format: 'fairsheet.model',
        version: 7,
        units: 'in',
        dimensions: [],
      }),
      'sheets.json': '[]',
      'corrections.json': '[]',
      'comments.json': '[]',
    });
    const res = await importBundle(other, bad);
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(
      /model\.json does not match the bundle format \(version/,
    );
  });

  it('refuses a bundle whose model holds a NUL character with 422 naming it, not a 500', async () => {
    const bad = await zipOf({
      'manifest.json': JSON.stringify({
        format: 'fairsheet.bundle',
        version: 1,
        exportedAt: 'today',
        project: { name: 'X', displayUnit: 'in', modelScale: null },
        files: [],
      }),
      'model.json': JSON.stringify({
        format: 'fairsheet.model',
        version: 1,
        units: 'in',
        dimensions: [{ name: 'a', kind: 'stated', value: '1', note: 'nul\u0000here' }],
      }),
      'sheets.json': '[]',
      'corrections.json': '[]',
      'comments.json': '[]',
    });
    const before = await projectCount();
    const res = await importBundle(other, bad);
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(
      /model\.json holds a character that cannot be stored .* at dimensions\.0\.note/,
    );
    expect(await projectCount()).toBe(before);
  });

  it('a stranger cannot export someone else’s project (404); signed out is 401', async () => {
    expect((await other.get(`/api/projects/${demoId}/export`)).status).toBe(404);
    const anon = new TestClient(t.app);
    await anon.refresh();
    expect((await anon.get(`/api/projects/${demoId}/export`)).status).toBe(401);
    expect((await importBundle(anon, bundle)).status).toBe(401);
  });
});
