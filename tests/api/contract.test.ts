/**
 * The contract: every answer the client reads, from the demo project (sheets with calibrations,
 * pins and measurements, parts and features, checks, comments, corrections, activity), checked
 * against the schema in shared/api that src/api names for it. A server change the schemas do not
 * follow (or the other way round) fails here, by route and field.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  activityList,
  checkList,
  comment,
  commentList,
  comparison,
  correctionList,
  historyList,
  invitation,
  invitationAccepted,
  invitationList,
  invitationPreview,
  memberList,
  messageAnswer,
  project,
  projectList,
  revisionDetail,
  saveAnswer,
  sessionResponse,
  sheet,
  sheetList,
  shopSheet,
  solveResult,
  storedModel,
} from '@shared/api';
import { demoPassword, demoProjectName, seedDemo } from '../../server/demo/seed';
import { createTestApp, TestClient, testHasher, waitForMail, type TestApp } from '../helpers/app';
import { answerOf } from '../helpers/contract';

let t: TestApp;
let builder: TestClient;
let projectId = '';

beforeAll(async () => {
  t = await createTestApp();
  await seedDemo(t.database.db, testHasher, t.storage);
  builder = new TestClient(t.app);
  expect((await builder.login('builder@example.com', demoPassword)).status).toBe(200);
  const list = answerOf(projectList, await builder.get('/api/projects').expect(200));
  projectId = list.projects.find((p) => p.name === demoProjectName)!.id;
});
afterAll(() => t?.close());

const url = (path = '') => `/api/projects/${projectId}${path}`;

describe('the answers the client reads match their schemas in shared/api', () => {
  it('GET /api/auth/session and the project, its list and its members', async () => {
    const session = answerOf(sessionResponse, await builder.get('/api/auth/session').expect(200));
    expect(session.user?.email).toBe('builder@example.com');
    expect(answerOf(project, await builder.get(url()).expect(200)).role).toBe('owner');
    const members = answerOf(memberList, await builder.get(url('/members')).expect(200));
    expect(members.members.map((m) => m.role).sort()).toEqual(['checker', 'owner']);
  });

  it('GET /model, PUT /model (a change, then no change), history, a revision, compare and restore', async () => {
    const stored = answerOf(storedModel, await builder.get(url('/model')).expect(200));
    expect(stored.result?.status).toBeDefined();
    expect(stored.model.features.length).toBeGreaterThan(0);

    const [first, ...rest] = stored.model.dimensions;
    const changed = { ...stored.model, dimensions: [{ ...first, note: 'contract test' }, ...rest] };
    const saved = answerOf(
      saveAnswer,
      await builder.put(url('/model'), { revision: stored.revision, model: changed }).expect(200),
    );
    expect(saved.revision).toBe(stored.revision + 1);
    expect(Object.keys(saved.result.values).length).toBe(stored.model.dimensions.length);
    const same = answerOf(
      saveAnswer,
      await builder.put(url('/model'), { revision: saved.revision, model: changed }).expect(200),
    );
    expect(same).toMatchObject({ revision: saved.revision, summary: 'no change' });

    const history = answerOf(historyList, await builder.get(url('/history')).expect(200));
    expect(history.entries.map((e) => e.revision)).toContain(saved.revision);
    const detail = answerOf(
      revisionDetail,
      await builder.get(url(`/history/${saved.revision}`)).expect(200),
    );
    expect(detail.diff.dimensions.map((d) => d.key)).toEqual([first!.name]);
    answerOf(revisionDetail, await builder.get(url('/history/0')).expect(200));

    const compared = answerOf(
      comparison,
      await builder.get(url(`/compare?from=0&to=${saved.revision}`)).expect(200),
    );
    expect(compared.moved.length).toBeGreaterThan(0);

    const restored = answerOf(
      saveAnswer,
      await builder
        .post(url(`/history/${stored.revision}/restore`), { revision: saved.revision })
        .expect(200),
    );
    expect(restored.revision).toBe(saved.revision + 1);
  });

  it('POST /api/solve, with and without a Monte Carlo', async () => {
    const { model } = answerOf(storedModel, await builder.get(url('/model')).expect(200));
    const solved = answerOf(solveResult, await builder.post('/api/solve', { model }).expect(200));
    expect(Object.keys(solved.values).length).toBe(model.dimensions.length);
    const sampled = answerOf(
      solveResult,
      await builder.post('/api/solve', { model, monteCarlo: { samples: 50, seed: 7 } }).expect(200),
    );
    expect(sampled.monteCarlo?.samples).toBe(50);
  });

  it('GET the sheets and one sheet, and PATCH one', async () => {
    const list = answerOf(sheetList, await builder.get(url('/sheets')).expect(200));
    expect(list.sheets.some((s) => s.calibration !== null && s.pins.length > 0)).toBe(true);
    const one = answerOf(
      sheet,
      await builder.get(url(`/sheets/${list.sheets[0]!.id}`)).expect(200),
    );
    const patched = answerOf(
      sheet,
      await builder
        .patch(url(`/sheets/${one.id}`), { revision: one.revision, title: `${one.title} (2)` })
        .expect(200),
    );
    expect(patched.revision).toBe(one.revision + 1);
  });

  it('GET the shop sheet', async () => {
    const sheetAnswer = answerOf(shopSheet, await builder.get(url('/shop-sheet')).expect(200));
    expect(sheetAnswer.groups.length).toBeGreaterThan(0);
  });

  it('GET checks, comments, corrections and activity; POST a comment', async () => {
    const checks = answerOf(checkList, await builder.get(url('/checks')).expect(200));
    // The demo records two checks (see server/demo/seed.ts).
    expect(checks.checks.length).toBe(2);
    const { sheets } = answerOf(sheetList, await builder.get(url('/sheets')).expect(200));
    const posted = answerOf(
      comment,
      await builder
        .post(url('/comments'), { targetKind: 'sheet', targetId: sheets[0]!.id, body: 'Right.' })
        .expect(201),
    );
    const comments = answerOf(commentList, await builder.get(url('/comments')).expect(200));
    expect(comments.comments.map((c) => c.id)).toContain(posted.id);
    const corrections = answerOf(
      correctionList,
      await builder.get(url('/corrections')).expect(200),
    );
    expect(corrections.corrections.length).toBeGreaterThan(0);
    const activity = answerOf(activityList, await builder.get(url('/activity')).expect(200));
    expect(activity.entries.length).toBeGreaterThan(0);
  });

  it('invitations: the list, an invitation, its preview, and its acceptance', async () => {
    const email = 'contract.invitee@example.com';
    const made = answerOf(
      invitation,
      await builder.post(url('/invitations'), { email, role: 'viewer' }).expect(201),
    );
    const list = answerOf(invitationList, await builder.get(url('/invitations')).expect(200));
    expect(list.invitations.map((i) => i.id)).toContain(made.id);
    const mail = await waitForMail(t, email, 5000, /\/invitations\/[\w-]+/);
    const token = mail.body.match(/\/invitations\/([\w-]+)/)![1];
    const preview = answerOf(
      invitationPreview,
      await new TestClient(t.app).get(`/api/invitations/${token}`).expect(200),
    );
    expect(preview.email).toBe(email);
    const invitee = new TestClient(t.app);
    await invitee.register(email);
    const accepted = answerOf(
      invitationAccepted,
      await invitee.post(`/api/invitations/${token}/accept`).expect(200),
    );
    expect(accepted).toEqual({ projectId, role: 'viewer' });
  });

  it('a project imported from a bundle: people recorded by name only (an empty id) match too', async () => {
    const bundle = await builder
      .get(url('/export'))
      .buffer(true)
      .parse((res, done) => {
        const chunks: Buffer[] = [];
        res.on('data', (c: Buffer) => chunks.push(c));
        res.on('end', () => done(null, Buffer.concat(chunks)));
      })
      .expect(200);
    const restorer = new TestClient(t.app);
    await restorer.register('contract.restorer@example.com');
    const imported = await restorer.agent
      .post('/api/projects/import')
      .set('X-CSRF-Token', restorer.csrf)
      .attach('file', bundle.body as Buffer, 'kestrel.fairsheet.zip')
      .expect(201);
    const at = (path: string) => `/api/projects/${imported.body.id}${path}`;
    const checks = answerOf(checkList, await restorer.get(at('/checks')).expect(200));
    // The demo's two checks, by its checker, who has no account behind the imported rows.
    expect(checks.checks.map((c) => c.checkedBy.id)).toEqual(['', '']);
    answerOf(commentList, await restorer.get(at('/comments')).expect(200));
    answerOf(correctionList, await restorer.get(at('/corrections')).expect(200));
    answerOf(activityList, await restorer.get(at('/activity')).expect(200));
    answerOf(historyList, await restorer.get(at('/history')).expect(200));
    answerOf(storedModel, await restorer.get(at('/model')).expect(200));
  });

  it('POST /api/auth/password-reset answers words only', async () => {
    const anon = new TestClient(t.app);
    await anon.refresh();
    answerOf(
      messageAnswer,
      await anon.post('/api/auth/password-reset', { email: 'nobody@example.com' }).expect(202),
    );
  });
});
