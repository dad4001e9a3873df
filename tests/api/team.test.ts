import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { upsertMembership } from '../../server/db/projects';
import { createTestApp, TestClient, waitForMail, type TestApp } from '../helpers/app';

let t: TestApp;
let owner: TestClient;
let checker: TestClient;
let viewer: TestClient;
let stranger: TestClient;
let projectId: string;
let checkerId: string;
let ownerId: string;

// overall = front + pitch + rear, horn positions from the front end (an invented chain, inches).
const model = (front = '8 3/4', edgeTol?: string) => ({
  format: 'fairsheet.model',
  version: 1,
  units: 'in',
  dimensions: [
    { name: 'front', kind: 'stated', value: front },
    { name: 'pitch', kind: 'stated', value: '8 1/2' },
    { name: 'edge', kind: 'stated', value: '5/16', ...(edgeTol ? { tol: edgeTol } : {}) },
    { name: 'horn1', kind: 'derived' },
    { name: 'horn2', kind: 'derived' },
    { name: 'bolt', kind: 'derived' },
  ],
  relations: [
    { id: 'a', expr: 'horn1 = front' },
    { id: 'b', expr: 'horn2 = horn1 + pitch' },
    { id: 'c', expr: 'bolt = horn1 - edge' },
  ],
});

async function save(m: object) {
  const { revision } = (await owner.get(`/api/projects/${projectId}/model`)).body;
  await owner.put(`/api/projects/${projectId}/model`, { revision, model: m }).expect(200);
}

beforeAll(async () => {
  t = await createTestApp();
  owner = new TestClient(t.app);
  checker = new TestClient(t.app);
  viewer = new TestClient(t.app);
  stranger = new TestClient(t.app);
  ownerId = (await owner.register('team.owner@example.com', 'owner password 1', 'Olive Owner')).id;
  checkerId = (await checker.register('team.checker@example.com', 'checker password', 'Jo Penrose'))
    .id;
  const v = await viewer.register('team.viewer@example.com');
  await stranger.register('team.stranger@example.com');
  projectId = (await owner.post('/api/projects', { name: 'Team tests' }).expect(201)).body.id;
  await upsertMembership(t.database.db, projectId, checkerId, 'checker');
  await upsertMembership(t.database.db, projectId, v.id, 'viewer');
  await save(model());
});
afterAll(() => t.close());

const url = (path: string) => `/api/projects/${projectId}${path}`;

describe('invitations', () => {
  it('the owner invites by e-mail; the mail carries a single-use link that adds the membership', async () => {
    const created = await owner.post(url('/invitations'), {
      email: 'New.Member@example.com',
      role: 'editor',
    });
    expect(created.status).toBe(201);
    expect(created.body).toMatchObject({
      email: 'new.member@example.com',
      role: 'editor',
      state: 'pending',
    });
    const mail = await waitForMail(t, 'new.member@example.com');
    // The subject is ours alone: neither the inviter's name nor the project's (both theirs).
    expect(mail.subject).toBe('An invitation to a project on Fairsheet');
    expect(mail.body).toContain('Team tests');
    const token = mail.body.match(/\/invitations\/([\w-]+)/)![1];

    const preview = await new TestClient(t.app).get(`/api/invitations/${token}`).expect(200);
    expect(preview.body).toMatchObject({
      projectName: 'Team tests',
      role: 'editor',
      state: 'pending',
      invitedBy: 'Olive Owner',
    });

    const invitee = new TestClient(t.app);
    await invitee.refresh();
    expect((await invitee.post(`/api/invitations/${token}/accept`)).status).toBe(401);
    // Registering from the link with the invited address: the account is made and signed in
    // at once (201), the link having shown the address reaches them.
    const registered = await invitee.post('/api/auth/register', {
      name: 'Nell Member',
      email: 'new.member@example.com',
      password: 'member password 1',
      invitation: token,
    });
    expect(registered.status).toBe(201);
    expect(registered.body.user.email).toBe('new.member@example.com');
    invitee.csrf = registered.body.csrfToken;
    const accepted = await invitee.post(`/api/invitations/${token}/accept`).expect(200);
    expect(accepted.body).toEqual({ projectId, role: 'editor' });
    expect((await invitee.get(url(''))).body.role).toBe('editor');

    const late = new TestClient(t.app);
    await late.register('late@example.com');
    const used = await late.post(`/api/invitations/${token}/accept`);
    expect(used.status).toBe(410);
    expect(used.body.error.message).toMatch(/already been used/);
  });

  it("POST /api/invitations/:token/accept answers 403 to another address, a member's included, and the invitation stays pending", async () => {
    await owner
      .post(url('/invitations'), { email: 'meant@example.com', role: 'editor' })
      .expect(201);
    const token = (await waitForMail(t, 'meant@example.com')).body.match(
      /\/invitations\/([\w-]+)/,
    )![1];
    const other = new TestClient(t.app);
    await other.register('not.meant@example.com');
    const refused = await other.post(`/api/invitations/${token}/accept`);
    expect(refused.status).toBe(403);
    expect(refused.body.error.message).toMatch(/for meant@example\.com/);
    expect((await other.get(url(''))).status).toBe(404);
    // A member of the project holding the link cannot use it up (nor raise their role by it).
    expect((await viewer.post(`/api/invitations/${token}/accept`)).status).toBe(403);
    expect((await viewer.get(url(''))).body.role).toBe('viewer');
    const preview = await new TestClient(t.app).get(`/api/invitations/${token}`).expect(200);
    expect(preview.body.state).toBe('pending');
    // Registering from the link with another address makes no account at once (202, mail).
    const guest = new TestClient(t.app);
    await guest.refresh();
    const elsewhere = await guest.post('/api/auth/register', {
      name: 'Elsewhere',
      email: 'elsewhere@example.com',
      password: 'elsewhere password',
      invitation: token,
    });
    expect(elsewhere.status).toBe(202);
    expect((await guest.refresh()).user).toBeNull();
  });

  it('an account whose address was never confirmed is mailed a link and answered 403; once confirmed it accepts', async () => {
    const older = new TestClient(t.app);
    const user = await older.register('older@example.com');
    // As an account made before addresses were confirmed.
    await t.database.pool.query('update users set email_verified_at = null where id = $1', [
      user.id,
    ]);
    await owner
      .post(url('/invitations'), { email: 'older@example.com', role: 'viewer' })
      .expect(201);
    const token = (await waitForMail(t, 'older@example.com', 5000, /\/invitations\//)).body.match(
      /\/invitations\/([\w-]+)/,
    )![1];
    const first = await older.post(`/api/invitations/${token}/accept`);
    expect(first.status).toBe(403);
    expect(first.body.error.message).toMatch(/Confirm that older@example\.com is yours/);
    const confirm = (
      await waitForMail(t, 'older@example.com', 5000, /\/confirm-email\?token=/)
    ).body.match(/\/confirm-email\?token=([\w-]+)/)![1];
    const confirmed = await older.post('/api/auth/confirm-email', { token: confirm }).expect(200);
    expect(confirmed.body.user.id).toBe(user.id);
    older.csrf = confirmed.body.csrfToken;
    await older.post(`/api/invitations/${token}/accept`).expect(200);
    expect((await older.get(url(''))).body.role).toBe('viewer');
  });

  it('registering from a link for an address that already has an account answers 409 to the link holder', async () => {
    await owner
      .post(url('/invitations'), { email: 'team.stranger@example.com', role: 'viewer' })
      .expect(201);
    const token = (
      await waitForMail(t, 'team.stranger@example.com', 5000, /\/invitations\//)
    ).body.match(/\/invitations\/([\w-]+)/)![1];
    const guest = new TestClient(t.app);
    await guest.refresh();
    const res = await guest.post('/api/auth/register', {
      name: 'Twice',
      email: 'team.stranger@example.com',
      password: 'another password 1',
      invitation: token,
    });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toMatch(/Sign in to accept/);
    // The account holder accepts with the account they have.
    await stranger.post(`/api/invitations/${token}/accept`).expect(200);
    await owner.delete(url(`/members/${(await stranger.refresh()).user.id}`)).expect(204);
  });

  it('pending invitations are listed; a revoked or expired link answers 410 with a clear message', async () => {
    const a = await owner
      .post(url('/invitations'), { email: 'revoked@example.com', role: 'viewer' })
      .expect(201);
    const b = await owner
      .post(url('/invitations'), { email: 'expired@example.com', role: 'viewer' })
      .expect(201);
    const list = await owner.get(url('/invitations')).expect(200);
    expect(list.body.invitations.map((i: { email: string }) => i.email)).toEqual(
      expect.arrayContaining(['revoked@example.com', 'expired@example.com']),
    );
    const revokedToken = (await waitForMail(t, 'revoked@example.com')).body.match(
      /\/invitations\/([\w-]+)/,
    )![1];
    const expiredToken = (await waitForMail(t, 'expired@example.com')).body.match(
      /\/invitations\/([\w-]+)/,
    )![1];
    await owner.delete(url(`/invitations/${a.body.id}`)).expect(204);
    await t.database.pool.query(
      `update invitations set expires_at = now() - interval '1 minute' where id = $1`,
      [b.body.id],
    );
    const c = new TestClient(t.app);
    await c.register('taker@example.com');
    const revoked = await c.post(`/api/invitations/${revokedToken}/accept`);
    expect(revoked.status).toBe(410);
    expect(revoked.body.error.message).toMatch(/withdrawn/);
    const expired = await c.post(`/api/invitations/${expiredToken}/accept`);
    expect(expired.status).toBe(410);
    expect(expired.body.error.message).toMatch(/expired/);
    expect((await c.get(url(''))).status).toBe(404);
  });

  it('resending gives a new link and the old one stops working', async () => {
    const inv = await owner
      .post(url('/invitations'), { email: 'resend@example.com', role: 'checker' })
      .expect(201);
    const first = (await waitForMail(t, 'resend@example.com')).body.match(
      /\/invitations\/([\w-]+)/,
    )![1];
    await owner.post(url(`/invitations/${inv.body.id}/resend`)).expect(200);
    await expect
      .poll(() => t.mail().filter((m) => m.to.includes('resend@example.com')).length, {
        timeout: 5000,
      })
      .toBe(2);
    expect((await new TestClient(t.app).get(`/api/invitations/${first}`)).status).toBe(404);
  });

  it('only the owner invites; an existing member cannot be invited again', async () => {
    expect(
      (await checker.post(url('/invitations'), { email: 'x@example.com', role: 'viewer' })).status,
    ).toBe(403);
    expect(
      (await stranger.post(url('/invitations'), { email: 'x@example.com', role: 'viewer' })).status,
    ).toBe(404);
    const dup = await owner.post(url('/invitations'), {
      email: 'team.checker@example.com',
      role: 'viewer',
    });
    expect(dup.status).toBe(409);
  });
});

describe('invitation limits', () => {
  it('invitations and resends past the limit per project or per address answer 429 with Retry-After', async () => {
    const limited = await createTestApp({ invitationLimits: { perProject: 3, perAddress: 2 } });
    try {
      const me = new TestClient(limited.app);
      await me.register('limited.owner@example.com');
      const project = async (name: string) =>
        (await me.post('/api/projects', { name }).expect(201)).body.id as string;
      const [a, b] = [await project('Limited A'), await project('Limited B')];
      const invite = (projectId: string, email: string) =>
        me.post(`/api/projects/${projectId}/invitations`, { email, role: 'viewer' });

      await invite(a, 'one@example.com').expect(201);
      const two = await invite(a, 'two@example.com').expect(201);
      // A refusal is not a mail sent: it does not count.
      await invite(a, 'limited.owner@example.com').expect(409);
      await me.post(`/api/projects/${a}/invitations/${two.body.id}/resend`).expect(200);
      const projectFull = await invite(a, 'three@example.com');
      expect(projectFull.status).toBe(429);
      expect(projectFull.body.error.code).toBe('rate_limited');
      expect(Number(projectFull.headers['retry-after'])).toBeGreaterThan(0);
      expect((await me.post(`/api/projects/${a}/invitations/${two.body.id}/resend`)).status).toBe(
        429,
      );
      // Another project has its own count, but an address counts across every project.
      const addressFull = await invite(b, 'two@example.com');
      expect(addressFull.status).toBe(429);
      expect(addressFull.body.error.message).toMatch(/address/);
      await invite(b, 'four@example.com').expect(201);
      await expect
        .poll(() => limited.mail().filter((m) => m.to.includes('two@example.com')).length)
        .toBe(2);
    } finally {
      await limited.close();
    }
  });
});

describe('members', () => {
  it('the last owner cannot be demoted or leave; another owner makes it possible', async () => {
    const demote = await owner.patch(url(`/members/${ownerId}`), { role: 'editor' });
    expect(demote.status).toBe(409);
    expect(demote.body.error.message).toMatch(/last owner/);
    expect((await owner.delete(url(`/members/${ownerId}`))).status).toBe(409);
    await owner.patch(url(`/members/${checkerId}`), { role: 'owner' }).expect(204);
    await owner.patch(url(`/members/${checkerId}`), { role: 'checker' }).expect(204);
  });

  it('a member can leave; only an owner removes others', async () => {
    const leaver = new TestClient(t.app);
    const l = await leaver.register('leaver@example.com');
    await upsertMembership(t.database.db, projectId, l.id, 'viewer');
    expect((await checker.delete(url(`/members/${l.id}`))).status).toBe(403);
    await leaver.delete(url(`/members/${l.id}`)).expect(204);
    expect((await leaver.get(url(''))).status).toBe(404);
  });
});

describe('checks', () => {
  it('a checker checks a derived value; it stays current while nothing upstream changes', async () => {
    const res = await checker.post(url('/checks'), { dimension: 'horn2' });
    expect(res.status).toBe(201);
    // 8 3/4 + 8 1/2 = 17 1/4 (exact in binary).
    expect(res.body).toMatchObject({
      dimension: 'horn2',
      state: 'current',
      checkedBy: { name: 'Jo Penrose' },
    });
    expect(res.body.value).toBeCloseTo(17.25, 12);
    await checker.post(url('/checks'), { dimension: 'bolt' }).expect(201);
    // A change that horn2 does not rest on: the edge tolerance.
    await save(model('8 3/4', '0.002'));
    const list = (await viewer.get(url('/checks')).expect(200)).body;
    const state = Object.fromEntries(
      list.checks.map((c: { dimension: string; state: string }) => [c.dimension, c.state]),
    );
    expect(state).toEqual({ bolt: 'void', horn2: 'current' });
    expect(list.summary).toEqual({ derived: 3, checked: 1, void: 1 });
  });

  it('an upstream change voids the check: needs re-check', async () => {
    await save(model('8 7/8', '0.002'));
    const list = (await viewer.get(url('/checks'))).body;
    const horn2 = list.checks.find((c: { dimension: string }) => c.dimension === 'horn2');
    expect(horn2.state).toBe('void');
    expect(horn2.valueNow).toBeCloseTo(17.375, 12);
    await checker.post(url('/checks'), { dimension: 'horn2' }).expect(201);
    expect(
      (await viewer.get(url('/checks'))).body.checks.find(
        (c: { dimension: string }) => c.dimension === 'horn2',
      ).state,
    ).toBe('current');
  });

  it('refuses a given figure, an unknown name, and anyone but a checker or owner', async () => {
    expect((await checker.post(url('/checks'), { dimension: 'front' })).status).toBe(400);
    expect((await checker.post(url('/checks'), { dimension: 'nosuch' })).status).toBe(404);
    expect((await viewer.post(url('/checks'), { dimension: 'horn1' })).status).toBe(403);
    await owner.post(url('/checks'), { dimension: 'horn1' }).expect(201);
    await checker.delete(url('/checks/horn1')).expect(204);
    expect((await checker.delete(url('/checks/horn1'))).status).toBe(404);
  });
});

describe('comments, corrections and activity', () => {
  it('a comment that @mentions a member mails them', async () => {
    const res = await checker.post(url('/comments'), {
      targetKind: 'dimension',
      targetId: 'horn2',
      body: 'Does this agree with the hornblock casting, @OliveOwner?',
    });
    expect(res.status).toBe(201);
    expect(res.body.mentions).toEqual(['Olive Owner']);
    const mail = await waitForMail(t, 'team.owner@example.com');
    expect(mail.subject).toMatch(/Jo Penrose mentioned you/);
    const list = await viewer.get(url('/comments?targetKind=dimension&targetId=horn2')).expect(200);
    expect(list.body.comments[0].body).toContain('hornblock casting');
    expect(
      (
        await viewer.post(url('/comments'), {
          targetKind: 'dimension',
          targetId: 'horn2',
          body: 'hi',
        })
      ).status,
    ).toBe(403);
    expect(
      (
        await checker.post(url('/comments'), {
          targetKind: 'dimension',
          targetId: 'horn2',
          body: '  ',
        })
      ).status,
    ).toBe(400);
  });

  it('comments attach to a relation, a pin or a sheet as well, each listed with its own target', async () => {
    const targets = [
      { targetKind: 'relation', targetId: 'b' },
      { targetKind: 'pin', targetId: '00000000-0000-4000-8000-000000000001:p1' },
      { targetKind: 'sheet', targetId: '00000000-0000-4000-8000-000000000001' },
    ];
    for (const t of targets)
      await checker
        .post(url('/comments'), { ...t, body: `About this ${t.targetKind}.` })
        .expect(201);
    for (const t of targets) {
      const list = (
        await viewer.get(
          url(`/comments?targetKind=${t.targetKind}&targetId=${encodeURIComponent(t.targetId)}`),
        )
      ).body.comments;
      expect(list.map((c: { body: string }) => c.body)).toEqual([`About this ${t.targetKind}.`]);
    }
  });

  it('a correction records what was wrong, what it became, who, why and from where', async () => {
    const res = await owner.post(url('/corrections'), {
      dimension: 'pitch',
      wrong: '8 1/4',
      corrected: '8 1/2',
      reason: 'The photo and the axle boxes agree on 8 1/2.',
      source: 'photograph',
    });
    expect(res.status).toBe(201);
    const list = (await viewer.get(url('/corrections'))).body.corrections;
    expect(list[0]).toMatchObject({
      wrong: '8 1/4',
      corrected: '8 1/2',
      source: 'photograph',
      author: { name: 'Olive Owner' },
    });
    expect(
      (await owner.post(url('/corrections'), { wrong: 'a', corrected: 'b', source: 'rumour' }))
        .status,
    ).toBe(400);
  });

  it('the activity lists saves, checks, comments, corrections and invitations newest first, filterable', async () => {
    const all = (await viewer.get(url('/activity')).expect(200)).body.entries as {
      kind: string;
      id: string;
    }[];
    const kinds = new Set(all.map((e) => e.kind));
    for (const k of ['save', 'check', 'uncheck', 'comment', 'correction', 'invitation', 'member'])
      expect(kinds).toContain(k);
    expect(Number(all[0]!.id)).toBeGreaterThan(Number(all.at(-1)!.id));
    const saves = (await viewer.get(url('/activity?kind=save'))).body.entries as { kind: string }[];
    expect(saves.length).toBeGreaterThan(0);
    expect(saves.every((e) => e.kind === 'save')).toBe(true);
  });
});
