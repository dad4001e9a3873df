// Every API route of the product, for every kind of caller: the table below is the rule book.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { upsertMembership } from '../../server/db/projects';
import { createTestApp, TestClient, waitForMail, type TestApp } from '../helpers/app';
import { makePng } from '../helpers/sheet-files';

type Who = 'owner' | 'editor' | 'checker' | 'viewer' | 'stranger' | 'signedOut';
const everyone: Who[] = ['owner', 'editor', 'checker', 'viewer', 'stranger', 'signedOut'];

let t: TestApp;
const c = {} as Record<Who, TestClient>;
const ids = {} as Record<Who, string>;
let projectId: string;
let counter = 0;

const model = {
  format: 'fairsheet.model',
  version: 1,
  units: 'in',
  dimensions: [
    { name: 'a', kind: 'stated', value: '1 1/2' },
    { name: 'b', kind: 'stated', value: '3/4' },
    { name: 'x', kind: 'derived' },
  ],
  relations: [{ id: 'r', expr: 'x = a + b' }],
};

const p = (path = '') => `/api/projects/${projectId}${path}`;
const revision = async () => (await c.owner.get(p('/model'))).body.revision as number;
const uploadSheet = async () =>
  (
    await c.owner.agent
      .post(p('/sheets'))
      .set('X-CSRF-Token', c.owner.csrf)
      .attach('file', makePng(8, 6, ++counter), `s${counter}.png`)
      .expect(201)
  ).body.sheets[0].id as string;
const scratchMember = async () => {
  const m = new TestClient(t.app);
  const u = await m.register(`scratch${++counter}@example.com`);
  await upsertMembership(t.database.db, projectId, u.id, 'viewer');
  return u.id;
};
/** A pending invitation's link token, read from the mail sink. */
const inviteToken = async (email = `link${++counter}@example.com`) => {
  await c.owner.post(p('/invitations'), { email, role: 'viewer' }).expect(201);
  const mail = await waitForMail(t, email);
  return mail.body.match(/\/invitations\/([\w-]+)/)![1];
};
const invite = async () =>
  (
    await c.owner
      .post(p('/invitations'), { email: `invitee${++counter}@example.com`, role: 'viewer' })
      .expect(201)
  ).body.id as string;

interface Row {
  route: string;
  /** The route as the Express router declares it, for the coverage check. */
  key: string;
  call: (who: TestClient, me: Who) => Promise<{ status: number }>;
  expect: Record<Who, number>;
}

const read = { owner: 200, editor: 200, checker: 200, viewer: 200, stranger: 404, signedOut: 401 };
const edit = (ok: number) => ({
  owner: ok,
  editor: ok,
  checker: 403,
  viewer: 403,
  stranger: 404,
  signedOut: 401,
});
const ownerOnly = (ok: number) => ({
  owner: ok,
  editor: 403,
  checker: 403,
  viewer: 403,
  stranger: 404,
  signedOut: 401,
});
const review = (ok: number) => ({
  owner: ok,
  editor: ok,
  checker: ok,
  viewer: 403,
  stranger: 404,
  signedOut: 401,
});
const checking = (ok: number) => ({
  owner: ok,
  editor: 403,
  checker: ok,
  viewer: 403,
  stranger: 404,
  signedOut: 401,
});
const signedIn = (ok: number) => ({
  owner: ok,
  editor: ok,
  checker: ok,
  viewer: ok,
  stranger: ok,
  signedOut: 401,
});

const rows: Row[] = [
  {
    route: 'GET /api/projects',
    key: 'GET /',
    call: (w) => w.get('/api/projects'),
    expect: signedIn(200),
  },
  {
    route: 'POST /api/projects',
    key: 'POST /',
    call: (w) => w.post('/api/projects', { name: 'Mine' }),
    expect: signedIn(201),
  },
  {
    route: 'POST /api/solve',
    key: 'POST /solve',
    call: (w) => w.post('/api/solve', { model }),
    expect: signedIn(200),
  },
  {
    route: 'GET /api/reference/threads/:designation',
    key: 'GET /reference/threads/:designation',
    call: (w) => w.get('/api/reference/threads/4BA'),
    expect: signedIn(200),
  },
  { route: 'GET /api/projects/:id', key: 'GET /:projectId', call: (w) => w.get(p()), expect: read },
  {
    route: 'PATCH /api/projects/:id',
    key: 'PATCH /:projectId',
    call: (w) => w.patch(p(), { modelScale: '1:8' }),
    expect: edit(200),
  },
  {
    route: 'GET /members',
    key: 'GET /:projectId/members',
    call: (w) => w.get(p('/members')),
    expect: read,
  },
  {
    route: 'PATCH /members/:userId',
    key: 'PATCH /:projectId/members/:userId',
    call: async (w) => w.patch(p(`/members/${await scratchMember()}`), { role: 'checker' }),
    expect: ownerOnly(204),
  },
  {
    route: 'DELETE /members/:userId (someone else)',
    key: 'DELETE /:projectId/members/:userId',
    call: async (w) => w.delete(p(`/members/${await scratchMember()}`)),
    expect: ownerOnly(204),
  },
  {
    route: 'GET /model',
    key: 'GET /:projectId/model',
    call: (w) => w.get(p('/model')),
    expect: read,
  },
  {
    route: 'PUT /model',
    key: 'PUT /:projectId/model',
    call: async (w) => w.put(p('/model'), { revision: await revision(), model }),
    expect: edit(200),
  },
  {
    route: 'GET /model/export',
    key: 'GET /:projectId/model/export',
    call: (w) => w.get(p('/model/export')),
    expect: read,
  },
  {
    route: 'GET /history',
    key: 'GET /:projectId/history',
    call: (w) => w.get(p('/history')),
    expect: read,
  },
  {
    route: 'GET /history/:revision',
    key: 'GET /:projectId/history/:revision',
    call: (w) => w.get(p('/history/1')),
    expect: read,
  },
  {
    route: 'GET /compare',
    key: 'GET /:projectId/compare',
    call: (w) => w.get(p('/compare?from=0&to=1')),
    expect: read,
  },
  {
    route: 'POST /history/:revision/restore',
    key: 'POST /:projectId/history/:revision/restore',
    call: async (w) => w.post(p('/history/1/restore'), { revision: await revision() }),
    expect: edit(200),
  },
  {
    route: 'GET /sheets',
    key: 'GET /:projectId/sheets',
    call: (w) => w.get(p('/sheets')),
    expect: read,
  },
  {
    route: 'POST /sheets',
    key: 'POST /:projectId/sheets',
    call: (w) =>
      w.agent
        .post(p('/sheets'))
        .set('X-CSRF-Token', w.csrf)
        .attach('file', makePng(8, 6, ++counter), 'drawing.png'),
    expect: edit(201),
  },
  {
    route: 'GET /sheets/:sheetId',
    key: 'GET /:projectId/sheets/:sheetId',
    call: async (w) => w.get(p(`/sheets/${await uploadSheet()}`)),
    expect: read,
  },
  {
    route: 'GET /sheets/:sheetId/file',
    key: 'GET /:projectId/sheets/:sheetId/file',
    call: async (w) => w.get(p(`/sheets/${await uploadSheet()}/file`)),
    expect: read,
  },
  {
    route: 'PATCH /sheets/:sheetId',
    key: 'PATCH /:projectId/sheets/:sheetId',
    call: async (w) =>
      w.patch(p(`/sheets/${await uploadSheet()}`), { revision: 0, title: 'Renamed' }),
    expect: edit(200),
  },
  {
    route: 'DELETE /sheets/:sheetId',
    key: 'DELETE /:projectId/sheets/:sheetId',
    call: async (w) => w.delete(p(`/sheets/${await uploadSheet()}`)),
    expect: edit(204),
  },
  {
    route: 'POST /sheets/:sheetId/measurements',
    key: 'POST /:projectId/sheets/:sheetId/measurements',
    call: async (w) => {
      // A sheet calibrated two-point (1,000 px is 10 in) with two pins 600 px apart.
      const sheetId = await uploadSheet();
      await c.owner
        .patch(p(`/sheets/${sheetId}`), {
          revision: 0,
          calibration: {
            method: 'two-point',
            reference: { a: { x: 1, y: 1 }, b: { x: 1001, y: 1 }, length: '10', lengthMm: 254 },
          },
          pins: [
            { id: 'pa', x: 100, y: 2 },
            { id: 'pb', x: 700, y: 2 },
          ],
        })
        .expect(200);
      return w.post(p(`/sheets/${sheetId}/measurements`), {
        sheetRevision: 1,
        modelRevision: await revision(),
        from: 'pa',
        to: 'pb',
        dimension: `span${++counter}`,
      });
    },
    expect: edit(200),
  },
  {
    route: 'GET /invitations',
    key: 'GET /:projectId/invitations',
    call: (w) => w.get(p('/invitations')),
    expect: ownerOnly(200),
  },
  {
    route: 'POST /invitations',
    key: 'POST /:projectId/invitations',
    call: (w) =>
      w.post(p('/invitations'), { email: `guest${++counter}@example.com`, role: 'viewer' }),
    expect: ownerOnly(201),
  },
  {
    route: 'DELETE /invitations/:id',
    key: 'DELETE /:projectId/invitations/:invitationId',
    call: async (w) => w.delete(p(`/invitations/${await invite()}`)),
    expect: ownerOnly(204),
  },
  {
    route: 'POST /invitations/:id/resend',
    key: 'POST /:projectId/invitations/:invitationId/resend',
    call: async (w) => w.post(p(`/invitations/${await invite()}/resend`)),
    expect: ownerOnly(200),
  },
  {
    route: 'GET /checks',
    key: 'GET /:projectId/checks',
    call: (w) => w.get(p('/checks')),
    expect: read,
  },
  {
    route: 'POST /checks',
    key: 'POST /:projectId/checks',
    call: (w) => w.post(p('/checks'), { dimension: 'x' }),
    expect: checking(201),
  },
  {
    route: 'DELETE /checks/:dimension',
    key: 'DELETE /:projectId/checks/:dimension',
    call: async (w) => {
      await c.owner.post(p('/checks'), { dimension: 'x' }).expect(201);
      return w.delete(p('/checks/x'));
    },
    expect: checking(204),
  },
  {
    route: 'GET /comments',
    key: 'GET /:projectId/comments',
    call: (w) => w.get(p('/comments')),
    expect: read,
  },
  {
    route: 'POST /comments',
    key: 'POST /:projectId/comments',
    call: (w) =>
      w.post(p('/comments'), {
        targetKind: 'dimension',
        targetId: 'x',
        body: 'Agrees with the casting.',
      }),
    expect: review(201),
  },
  {
    route: 'GET /corrections',
    key: 'GET /:projectId/corrections',
    call: (w) => w.get(p('/corrections')),
    expect: read,
  },
  {
    route: 'POST /corrections',
    key: 'POST /:projectId/corrections',
    call: (w) =>
      w.post(p('/corrections'), { wrong: '1 1/4', corrected: '1 1/2', source: 'mating part' }),
    expect: review(201),
  },
  {
    route: 'GET /shop-sheet',
    key: 'GET /:projectId/shop-sheet',
    call: (w) => w.get(p('/shop-sheet')),
    expect: read,
  },
  {
    route: 'GET /shop-sheet.pdf',
    key: 'GET /:projectId/shop-sheet.pdf',
    call: (w) => w.get(p('/shop-sheet.pdf?paper=a4')),
    expect: read,
  },
  {
    route: 'GET /shop-sheet.csv',
    key: 'GET /:projectId/shop-sheet.csv',
    call: (w) => w.get(p('/shop-sheet.csv')),
    expect: read,
  },
  {
    route: 'GET /api/invitations/:token (a pending link: anyone may look)',
    key: 'GET /:token',
    call: async (w) => w.get(`/api/invitations/${await inviteToken()}`),
    expect: { owner: 200, editor: 200, checker: 200, viewer: 200, stranger: 200, signedOut: 200 },
  },
  {
    route:
      "POST /api/invitations/:token/accept (only by the invited address: a stranger invited joins; a member holding another's link is refused)",
    key: 'POST /:token/accept',
    call: async (w, me) => {
      const token = await inviteToken(me === 'stranger' ? 'stranger@authz.example.com' : undefined);
      const res = await w.post(`/api/invitations/${token}/accept`);
      if (me === 'stranger') await c.owner.delete(p(`/members/${ids.stranger}`)).expect(204);
      return res;
    },
    expect: { owner: 403, editor: 403, checker: 403, viewer: 403, stranger: 200, signedOut: 401 },
  },
  {
    route: 'GET /export',
    key: 'GET /:projectId/export',
    call: (w) => w.get(p('/export')),
    expect: read,
  },
  {
    route: 'POST /api/projects/import',
    key: 'POST /import',
    call: async (w) => {
      const bundle = await c.owner
        .get(p('/export'))
        .buffer(true)
        .parse((res, cb) => {
          const chunks: Buffer[] = [];
          res.on('data', (b: Buffer) => chunks.push(b));
          res.on('end', () => cb(null, Buffer.concat(chunks)));
        });
      return w.agent
        .post('/api/projects/import')
        .set('X-CSRF-Token', w.csrf)
        .attach('file', bundle.body as Buffer, 'p.zip');
    },
    expect: signedIn(201),
  },
  {
    route: 'GET /activity',
    key: 'GET /:projectId/activity',
    call: (w) => w.get(p('/activity')),
    expect: read,
  },
  {
    route: 'DELETE /api/projects/:id (a scratch project with the same members)',
    key: 'DELETE /:projectId',
    call: async (w) => {
      const scratch = (
        await c.owner.post('/api/projects', { name: `Scratch ${++counter}` }).expect(201)
      ).body.id;
      for (const who of ['editor', 'checker', 'viewer'] as const)
        await upsertMembership(t.database.db, scratch, ids[who], who);
      return w.delete(`/api/projects/${scratch}`);
    },
    expect: ownerOnly(204),
  },
];

beforeAll(async () => {
  t = await createTestApp();
  for (const who of everyone) {
    c[who] = new TestClient(t.app);
    if (who === 'signedOut') await c[who].refresh();
    else ids[who] = (await c[who].register(`${who}@authz.example.com`)).id;
  }
  projectId = (await c.owner.post('/api/projects', { name: 'Authorisation' }).expect(201)).body.id;
  for (const who of ['editor', 'checker', 'viewer'] as const)
    await upsertMembership(t.database.db, projectId, ids[who], who);
  await c.owner.put(p('/model'), { revision: 0, model }).expect(200);
});
afterAll(() => t.close());

describe('authorisation matrix: every route for every caller', () => {
  for (const row of rows) {
    for (const who of everyone) {
      it(`${row.route} answers ${row.expect[who]} to ${who}`, async () => {
        const res = await row.call(c[who], who);
        expect(res.status).toBe(row.expect[who]);
      });
    }
  }

  it('the table covers every route the app mounts, but sign-in and health (tested on their own)', () => {
    type Layer = {
      route?: { path: string; methods: Record<string, boolean> };
      handle?: { stack?: Layer[] };
    };
    const declared: string[] = [];
    const walk = (stack: Layer[]) => {
      for (const layer of stack) {
        if (layer.route)
          for (const m of Object.keys(layer.route.methods))
            declared.push(`${m.toUpperCase()} ${layer.route.path}`);
        else if (layer.handle?.stack) walk(layer.handle.stack);
      }
    };
    walk((t.app as unknown as { router: { stack: Layer[] } }).router.stack);
    const testedElsewhere = new Set([
      'GET /session',
      'POST /register',
      'POST /confirm-email',
      'POST /login',
      'POST /logout',
      'POST /password-reset',
      'POST /password-reset/confirm',
      'GET /messages.json',
      'GET /{*splat}',
    ]);
    const inTable = new Set(rows.map((r) => r.key));
    expect(declared.length).toBeGreaterThan(40);
    expect(declared.filter((k) => !testedElsewhere.has(k) && !inTable.has(k))).toEqual([]);
  });
});
