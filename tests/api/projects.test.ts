import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { upsertMembership } from '../../server/db/projects';
import { createTestApp, TestClient, type TestApp } from '../helpers/app';

let t: TestApp;
let owner: TestClient;
let editor: TestClient;
let checker: TestClient;
let viewer: TestClient;
let stranger: TestClient;
let signedOut: TestClient;
let projectId: string;

beforeAll(async () => {
  t = await createTestApp();
  owner = new TestClient(t.app);
  editor = new TestClient(t.app);
  checker = new TestClient(t.app);
  viewer = new TestClient(t.app);
  stranger = new TestClient(t.app);
  signedOut = new TestClient(t.app);
  await owner.register('owner@example.com');
  const e = await editor.register('editor@example.com');
  const c = await checker.register('checker@example.com');
  const v = await viewer.register('viewer@example.com');
  await stranger.register('stranger@example.com');
  await signedOut.refresh();
  const created = await owner.post('/api/projects', {
    name: 'Kestrel frames',
    displayUnit: 'in',
    modelScale: '1:8',
  });
  expect(created.status).toBe(201);
  projectId = created.body.id;
  await upsertMembership(t.database.db, projectId, e.id, 'editor');
  await upsertMembership(t.database.db, projectId, c.id, 'checker');
  await upsertMembership(t.database.db, projectId, v.id, 'viewer');
});
afterAll(() => t.close());

describe('projects', () => {
  it('POST /api/projects makes the creator owner and lists it with the role', async () => {
    const list = await owner.get('/api/projects').expect(200);
    expect(list.body.projects).toHaveLength(1);
    expect(list.body.projects[0]).toMatchObject({
      name: 'Kestrel frames',
      role: 'owner',
      displayUnit: 'in',
      modelScale: '1:8',
    });
    const forViewer = await viewer.get('/api/projects').expect(200);
    expect(forViewer.body.projects[0].role).toBe('viewer');
    const forStranger = await stranger.get('/api/projects').expect(200);
    expect(forStranger.body.projects).toEqual([]);
  });

  it('POST /api/projects refuses a missing name and a bad unit with 400 naming both', async () => {
    const res = await owner.post('/api/projects', { name: ' ', displayUnit: 'cubit' });
    expect(res.status).toBe(400);
    const paths = res.body.error.details.fields.map((f: { path: string }) => f.path).sort();
    expect(paths).toEqual(['displayUnit', 'name']);
  });

  it('GET /api/projects/:id answers 400 to an id that is not a project id', async () => {
    const res = await owner.get('/api/projects/not-a-uuid');
    expect(res.status).toBe(400);
  });

  it('PATCH renames for the owner and the editor', async () => {
    const a = await owner.patch(`/api/projects/${projectId}`, { name: 'Kestrel frames and stays' });
    expect(a.status).toBe(200);
    expect(a.body.name).toBe('Kestrel frames and stays');
    const b = await editor.patch(`/api/projects/${projectId}`, { displayUnit: 'mm' });
    expect(b.status).toBe(200);
    expect(b.body).toMatchObject({ displayUnit: 'mm', role: 'editor' });
    const c = await owner.patch(`/api/projects/${projectId}`, { name: 'Kestrel frames' });
    expect(c.body).toMatchObject({ name: 'Kestrel frames', displayUnit: 'mm', modelScale: '1:8' });
  });

  it('PATCH with an empty body answers 400', async () => {
    expect((await owner.patch(`/api/projects/${projectId}`, {})).status).toBe(400);
  });

  it('GET /api/projects/:id/members lists every member with the role', async () => {
    const res = await checker.get(`/api/projects/${projectId}/members`).expect(200);
    const roles = Object.fromEntries(
      res.body.members.map((m: { email: string; role: string }) => [m.email, m.role]),
    );
    expect(roles).toEqual({
      'owner@example.com': 'owner',
      'editor@example.com': 'editor',
      'checker@example.com': 'checker',
      'viewer@example.com': 'viewer',
    });
  });
});

// Expected status per route and role: the table is the specification.
const matrix: {
  route: string;
  call: (c: TestClient, id: string) => Promise<{ status: number }>;
  expect: Record<'owner' | 'editor' | 'checker' | 'viewer' | 'stranger' | 'signedOut', number>;
}[] = [
  {
    route: 'GET /api/projects/:id',
    call: (c, id) => c.get(`/api/projects/${id}`),
    expect: { owner: 200, editor: 200, checker: 200, viewer: 200, stranger: 404, signedOut: 401 },
  },
  {
    route: 'GET /api/projects/:id/members',
    call: (c, id) => c.get(`/api/projects/${id}/members`),
    expect: { owner: 200, editor: 200, checker: 200, viewer: 200, stranger: 404, signedOut: 401 },
  },
  {
    route: 'PATCH /api/projects/:id',
    call: (c, id) => c.patch(`/api/projects/${id}`, { modelScale: '1:8' }),
    expect: { owner: 200, editor: 200, checker: 403, viewer: 403, stranger: 404, signedOut: 401 },
  },
  {
    route: 'DELETE /api/projects/:id (of a scratch project)',
    call: (c, id) => c.delete(`/api/projects/${id}`),
    expect: { owner: 204, editor: 403, checker: 403, viewer: 403, stranger: 404, signedOut: 401 },
  },
];

describe('role rules', () => {
  for (const row of matrix) {
    for (const who of ['signedOut', 'stranger', 'viewer', 'checker', 'editor', 'owner'] as const) {
      it(`${row.route} answers ${row.expect[who]} to ${who}`, async () => {
        const clients = { owner, editor, checker, viewer, stranger, signedOut };
        const res = await row.call(clients[who], projectId);
        expect(res.status).toBe(row.expect[who]);
        if (row.expect[who] === 204) {
          // The owner really deleted it (this row runs last).
          expect((await owner.get(`/api/projects/${projectId}`)).status).toBe(404);
        }
      });
    }
  }

  it('a stranger gets the same 404 for a project that exists and one that does not', async () => {
    const other = await owner.post('/api/projects', { name: 'Private' }).expect(201);
    const real = await stranger.get(`/api/projects/${other.body.id}`);
    const missing = await stranger.get('/api/projects/00000000-0000-4000-8000-000000000000');
    expect(real.status).toBe(404);
    expect(missing.status).toBe(404);
    expect(real.body).toEqual(missing.body);
  });
});
