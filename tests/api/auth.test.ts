import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { passwordResetMessage, registerMessage } from '@shared/api';
import { createTestApp, testHasher, TestClient, waitForMail, type TestApp } from '../helpers/app';

let t: TestApp;
beforeAll(async () => {
  t = await createTestApp();
});
afterAll(() => t.close());

describe('sessions and CSRF', () => {
  it('GET /api/auth/session answers no user and a CSRF token when signed out', async () => {
    const c = new TestClient(t.app);
    const body = await c.refresh();
    expect(body.user).toBeNull();
    expect(body.csrfToken).toMatch(/^[\w-]{20,}$/);
  });

  it('POST without the X-CSRF-Token header is refused with 403', async () => {
    const c = new TestClient(t.app);
    await c.refresh();
    const res = await c.agent
      .post('/api/auth/login')
      .send({ email: 'a@example.com', password: 'x' });
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe('csrf');
  });

  it('POST with a wrong CSRF token is refused with 403', async () => {
    const c = new TestClient(t.app);
    await c.refresh();
    const res = await c.agent
      .post('/api/projects')
      .set('X-CSRF-Token', 'not-the-token')
      .send({ name: 'x' });
    expect(res.status).toBe(403);
  });

  it('answers with a Content-Security-Policy that allows only our own origin', async () => {
    const res = await new TestClient(t.app).get('/api/health').expect(200);
    const csp = String(res.headers['content-security-policy']);
    expect(csp).toContain("default-src 'self'");
    expect(csp).toContain("script-src 'self' 'wasm-unsafe-eval'");
    expect(csp).toContain("frame-ancestors 'none'");
    expect(res.headers['x-powered-by']).toBeUndefined();
    expect(res.headers['x-content-type-options']).toBe('nosniff');
  });

  it('GET /api/health answers ok with the database up', async () => {
    const res = await new TestClient(t.app).get('/api/health').expect(200);
    expect(res.body).toEqual({ ok: true, db: 'up' });
  });
});

describe('register and sign in', () => {
  it('POST /api/auth/register answers 202 and no session; the mailed link makes the account and signs it in', async () => {
    const c = new TestClient(t.app);
    await c.refresh();
    const res = await c.post('/api/auth/register', {
      name: 'New Builder',
      email: 'New.Builder@Example.com',
      password: 'correct horse battery',
    });
    expect(res.status).toBe(202);
    expect(res.body).toEqual({ message: registerMessage });
    expect((await c.refresh()).user).toBeNull();
    // No account until the link is opened: signing in fails as for an unknown address.
    expect(
      (await new TestClient(t.app).login('new.builder@example.com', 'correct horse battery'))
        .status,
    ).toBe(401);

    const mail = await waitForMail(t, 'new.builder@example.com');
    expect(mail.subject).toBe('Finish creating your Fairsheet account');
    expect(mail.body).not.toContain('New Builder'); // the registrant's own words stay out
    const token = mail.body.match(/\/confirm-email\?token=([\w-]+)/)![1];
    const confirmed = await c.post('/api/auth/confirm-email', { token });
    expect(confirmed.status).toBe(200);
    expect(confirmed.body.user).toMatchObject({
      email: 'new.builder@example.com',
      name: 'New Builder',
    });
    c.csrf = confirmed.body.csrfToken;
    expect((await c.refresh()).user.email).toBe('new.builder@example.com');
    await c.get('/api/projects').expect(200);

    const again = await new TestClient(t.app).post('/api/auth/confirm-email', { token });
    expect(again.status).toBe(403); // no CSRF token: refused before the link is looked at
    const other = new TestClient(t.app);
    await other.refresh();
    const used = await other.post('/api/auth/confirm-email', { token });
    expect(used.status).toBe(400);
    expect(used.body.error.details.fields[0].path).toBe('token');
  });

  it('register answers a taken address exactly as a new one (202, same body, no session) and tells its owner by mail', async () => {
    const owner = new TestClient(t.app);
    await owner.register('taken@example.com', 'the owner password', 'Tam Owner');
    const asker = new TestClient(t.app);
    await asker.refresh();
    const taken = await asker.post('/api/auth/register', {
      name: 'Someone',
      email: 'Taken@example.com',
      password: 'another long password',
    });
    const fresh = await asker.post('/api/auth/register', {
      name: 'Someone',
      email: 'free.address@example.com',
      password: 'another long password',
    });
    expect(taken.status).toBe(202);
    expect(fresh.status).toBe(202);
    expect(taken.body).toEqual(fresh.body);
    expect(taken.headers['set-cookie']).toEqual(fresh.headers['set-cookie']);
    expect((await asker.refresh()).user).toBeNull();

    const notice = await waitForMail(t, 'taken@example.com');
    expect(notice.subject).toBe('Someone tried to register with your address');
    expect(notice.body).toMatch(/If it was you, sign in, or reset your password/);
    expect(notice.body).not.toMatch(/token=/);
    // The owner's password is unchanged, and the attempt's password opens nothing.
    expect(
      (await new TestClient(t.app).login('taken@example.com', 'the owner password')).status,
    ).toBe(200);
    expect(
      (await new TestClient(t.app).login('taken@example.com', 'another long password')).status,
    ).toBe(401);
  });

  it('register hashes the password whether or not the address is taken (the answer takes as long)', async () => {
    let hashes = 0;
    const counting = {
      hash: (password: string) => ((hashes += 1), testHasher.hash(password)),
      verify: testHasher.verify,
    };
    const counted = await createTestApp({ hasher: counting });
    try {
      const c = new TestClient(counted.app);
      await c.register('counted.owner@example.com');
      const asker = new TestClient(counted.app);
      await asker.refresh();
      const body = { name: 'X', password: 'a long enough password' };
      const before = hashes;
      await asker
        .post('/api/auth/register', { ...body, email: 'counted.owner@example.com' })
        .expect(202);
      expect(hashes - before).toBe(1);
      await asker
        .post('/api/auth/register', { ...body, email: 'counted.new@example.com' })
        .expect(202);
      expect(hashes - before).toBe(2);
    } finally {
      await counted.close();
    }
  });

  it('a confirmation link refuses with 400 once expired; opening one ends the other waiting registrations of the address', async () => {
    const c = new TestClient(t.app);
    await c.refresh();
    const body = { name: 'Late', email: 'late.confirm@example.com', password: 'late password 1' };
    await c.post('/api/auth/register', body).expect(202);
    await c.post('/api/auth/register', { ...body, password: 'late password 2' }).expect(202);
    const links = () =>
      t
        .mail()
        .filter((m) => m.to.includes(body.email))
        .map((m) => m.body.match(/\/confirm-email\?token=([\w-]+)/)![1]);
    await expect.poll(() => links().length).toBe(2);
    const [one, other] = links();
    await t.database.pool.query(
      `update email_confirmations set expires_at = now() - interval '1 minute' where email = $1`,
      ['late.confirm@example.com'],
    );
    expect((await c.post('/api/auth/confirm-email', { token: one })).status).toBe(400);
    await t.database.pool.query(
      `update email_confirmations set expires_at = now() + interval '1 hour' where email = $1`,
      [body.email],
    );
    await c.post('/api/auth/confirm-email', { token: one }).expect(200);
    // The other waiting registration went with the account made: its link opens nothing.
    const late = new TestClient(t.app);
    await late.refresh();
    expect((await late.post('/api/auth/confirm-email', { token: other })).status).toBe(400);
    const signIns = await Promise.all(
      ['late password 1', 'late password 2'].map(
        async (p) => (await new TestClient(t.app).login(body.email, p)).status,
      ),
    );
    expect(signIns.sort()).toEqual([200, 401]);
  });

  it('register refuses a short password with 400 naming the field', async () => {
    const c = new TestClient(t.app);
    await c.refresh();
    const res = await c.post('/api/auth/register', {
      name: 'Short',
      email: 'short@example.com',
      password: 'abc',
    });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('bad_request');
    expect(res.body.error.details.fields.map((f: { path: string }) => f.path)).toEqual([
      'password',
    ]);
  });

  it('register refuses a bad e-mail and a missing name, naming both fields', async () => {
    const c = new TestClient(t.app);
    await c.refresh();
    const res = await c.post('/api/auth/register', {
      email: 'not-an-email',
      password: 'long enough password',
    });
    expect(res.status).toBe(400);
    const paths = res.body.error.details.fields.map((f: { path: string }) => f.path).sort();
    expect(paths).toEqual(['email', 'name']);
  });

  it('login regenerates the session id and a new CSRF token', async () => {
    const c = new TestClient(t.app);
    await c.register('regen@example.com', 'regen password 1');
    await c.post('/api/auth/logout').expect(204);
    const before = await c.refresh();
    const cookieBefore = (await c.get('/api/auth/session')).headers['set-cookie'];
    const res = await c.login('regen@example.com', 'regen password 1');
    expect(res.status).toBe(200);
    expect(res.body.csrfToken).not.toBe(before.csrfToken);
    const setCookie = String(res.headers['set-cookie']);
    expect(setCookie).toMatch(/fairsheet\.sid=/);
    expect(setCookie).toMatch(/HttpOnly/i);
    expect(setCookie).toMatch(/SameSite=Lax/i);
    expect(setCookie).not.toBe(String(cookieBefore));
  });

  it('a wrong password and an unknown e-mail get the same 401 and message', async () => {
    const c = new TestClient(t.app);
    await c.register('known@example.com', 'the right password');
    const wrong = await new TestClient(t.app).login('known@example.com', 'the wrong password');
    const unknown = await new TestClient(t.app).login('nobody@example.com', 'the wrong password');
    expect(wrong.status).toBe(401);
    expect(unknown.status).toBe(401);
    expect(wrong.body.error.message).toBe(unknown.body.error.message);
  });

  it('logout ends the session: /api/projects then answers 401', async () => {
    const c = new TestClient(t.app);
    await c.register('leaving@example.com');
    await c.post('/api/auth/logout').expect(204);
    await c.refresh();
    const res = await c.get('/api/projects');
    expect(res.status).toBe(401);
    expect(res.body.error.code).toBe('unauthenticated');
  });

  it('an unchanged session slides its expiry once, not on every request', async () => {
    const c = new TestClient(t.app);
    await c.register('steady@example.com');
    const expiry = async () =>
      (
        await t.database.pool.query<{ expire: Date }>(
          `select expire from session where sess->>'userId' is not null
             and sess->>'csrfToken' = $1`,
          [c.csrf],
        )
      ).rows[0]!.expire.getTime();
    const atSignIn = await expiry();
    await new Promise((r) => setTimeout(r, 1100)); // the column keeps whole seconds
    await c.get('/api/projects').expect(200);
    const touched = await expiry();
    expect(touched).toBeGreaterThan(atSignIn);
    await new Promise((r) => setTimeout(r, 1100));
    for (let i = 0; i < 5; i++) await c.get('/api/projects').expect(200);
    expect(await expiry()).toBe(touched);
  });
});

describe('rate limiting of failed sign-ins', () => {
  it('the 11th failure in 15 minutes for one account and address answers 429 with Retry-After', async () => {
    const owner = new TestClient(t.app);
    await owner.register('target@example.com', 'the real password');
    const attacker = new TestClient(t.app);
    for (let i = 0; i < 10; i++) {
      const res = await attacker.login('target@example.com', `guess number ${i}`);
      expect(res.status).toBe(401);
    }
    const blocked = await attacker.login('target@example.com', 'the real password');
    expect(blocked.status).toBe(429);
    expect(blocked.body.error.code).toBe('rate_limited');
    expect(Number(blocked.headers['retry-after'])).toBeGreaterThan(0);
    // Another account from the same address is not locked out.
    const other = new TestClient(t.app);
    await other.register('bystander@example.com', 'bystander password');
    await other.post('/api/auth/logout');
    expect((await other.login('bystander@example.com', 'bystander password')).status).toBe(200);
  });

  it('successful sign-ins do not count towards the limit', async () => {
    const c = new TestClient(t.app);
    await c.register('regular@example.com', 'regular password');
    for (let i = 0; i < 12; i++) {
      const res = await c.login('regular@example.com', 'regular password');
      expect(res.status).toBe(200);
    }
  });
});

describe('limits per client address as well as per e-mail', () => {
  let limited: TestApp;
  beforeAll(async () => {
    // Behind one proxy hop, so each test client can have its own address.
    limited = await createTestApp({
      trustProxy: '1',
      authLimits: { registrationsPerClient: 3, signInFailuresPerClient: 5 },
    });
  });
  afterAll(() => limited.close());

  async function from(address: string) {
    const c = new TestClient(limited.app);
    await c.refresh();
    return (url: string, body: object) =>
      c.agent.post(url).set('X-CSRF-Token', c.csrf).set('X-Forwarded-For', address).send(body);
  }
  const registration = (email: string) => ({
    name: 'R',
    email,
    password: 'a long enough password',
  });

  it('POST /api/auth/register: past the limit for one client address answers 429 with Retry-After; another client is not counted', async () => {
    const post = await from('198.51.100.1');
    for (let i = 0; i < 3; i++)
      expect(
        (await post('/api/auth/register', registration(`client${i}@example.com`))).status,
      ).toBe(202);
    const blocked = await post('/api/auth/register', registration('client3@example.com'));
    expect(blocked.status).toBe(429);
    expect(blocked.body.error.code).toBe('rate_limited');
    expect(Number(blocked.headers['retry-after'])).toBeGreaterThan(0);
    const other = await from('198.51.100.2');
    expect((await other('/api/auth/register', registration('client3@example.com'))).status).toBe(
      202,
    );
  });

  it('POST /api/auth/register: the 4th naming one e-mail in an hour answers 429, whichever client sends it', async () => {
    for (let i = 0; i < 3; i++) {
      const post = await from(`198.51.100.${10 + i}`);
      expect((await post('/api/auth/register', registration('inbox@example.com'))).status).toBe(
        202,
      );
    }
    const post = await from('198.51.100.20');
    expect((await post('/api/auth/register', registration('inbox@example.com'))).status).toBe(429);
    await expect
      .poll(() => limited.mail().filter((m) => m.to.includes('inbox@example.com')).length)
      .toBe(3);
  });

  it('POST /api/auth/login: failures with a new e-mail each time are limited per client address (429); another client signs in', async () => {
    const owner = new TestClient(limited.app);
    await owner.register('limited.owner@example.com', 'the owner password');
    const post = await from('198.51.100.30');
    for (let i = 0; i < 5; i++) {
      const res = await post('/api/auth/login', {
        email: `nobody${i}@example.com`,
        password: 'guess',
      });
      expect(res.status).toBe(401);
    }
    const blocked = await post('/api/auth/login', {
      email: 'limited.owner@example.com',
      password: 'the owner password',
    });
    expect(blocked.status).toBe(429);
    expect(blocked.body.error.code).toBe('rate_limited');
    const other = await from('198.51.100.31');
    expect(
      (
        await other('/api/auth/login', {
          email: 'limited.owner@example.com',
          password: 'the owner password',
        })
      ).status,
    ).toBe(200);
  });
});

describe('the client address behind a load balancer (TRUST_PROXY)', () => {
  // Ten failures from one address, then the real password from another: refused only when the
  // two addresses are the same client to the app.
  async function afterTenFailures(app: TestApp, email: string, from: string, then: string) {
    const owner = new TestClient(app.app);
    await owner.register(email, 'the real password');
    const attacker = new TestClient(app.app);
    await attacker.refresh();
    const login = (password: string, address: string) =>
      attacker.agent
        .post('/api/auth/login')
        .set('X-CSRF-Token', attacker.csrf)
        .set('X-Forwarded-For', address)
        .send({ email, password });
    for (let i = 0; i < 10; i++) expect((await login(`guess ${i}`, from)).status).toBe(401);
    return (await login('the real password', then)).status;
  }

  it('unset, a forged X-Forwarded-For does not make a new client: the limit holds', async () => {
    expect(await afterTenFailures(t, 'forged.xff@example.com', '203.0.113.7', '203.0.113.8')).toBe(
      429,
    );
  });

  it('set to one hop, the address the proxy gives is the client: another one is not limited', async () => {
    const behind = await createTestApp({ trustProxy: '1' });
    try {
      expect(
        await afterTenFailures(behind, 'behind.proxy@example.com', '203.0.113.7', '203.0.113.8'),
      ).toBe(200);
      expect(
        await afterTenFailures(behind, 'same.client@example.com', '203.0.113.9', '203.0.113.9'),
      ).toBe(429);
    } finally {
      await behind.close();
    }
  });
});

describe('password reset by e-mail', () => {
  it('answers the same for a known and an unknown address', async () => {
    const c = new TestClient(t.app);
    await c.register('same.answer@example.com');
    const asker = new TestClient(t.app);
    await asker.refresh();
    const known = await asker.post('/api/auth/password-reset', {
      email: 'same.answer@example.com',
    });
    const unknown = await asker.post('/api/auth/password-reset', {
      email: 'no.account@example.com',
    });
    expect(known.status).toBe(202);
    expect(unknown.status).toBe(202);
    expect(known.body).toEqual({ message: passwordResetMessage });
    expect(unknown.body).toEqual(known.body);
  });

  it('mails a working single-use link through the SMTP sink', async () => {
    const c = new TestClient(t.app);
    await c.register('forgetful@example.com', 'old password 123');
    const asker = new TestClient(t.app);
    await asker.refresh();
    await asker.post('/api/auth/password-reset', { email: 'forgetful@example.com' }).expect(202);

    const mail = await waitForMail(t, 'forgetful@example.com');
    expect(mail.subject).toMatch(/reset/i);
    const link = mail.body.match(/https?:\/\/\S+\/reset-password\?token=([\w-]+)/);
    expect(link).not.toBeNull();
    const token = link![1];

    await asker
      .post('/api/auth/password-reset/confirm', { token, password: 'new password 456' })
      .expect(200);
    // The old session of that user is signed out everywhere.
    expect((await c.get('/api/projects')).status).toBe(401);
    expect(
      (await new TestClient(t.app).login('forgetful@example.com', 'old password 123')).status,
    ).toBe(401);
    expect(
      (await new TestClient(t.app).login('forgetful@example.com', 'new password 456')).status,
    ).toBe(200);

    const again = await asker.post('/api/auth/password-reset/confirm', {
      token,
      password: 'third password 789',
    });
    expect(again.status).toBe(400);
    expect(again.body.error.details.fields[0].path).toBe('token');
  });

  it('asking again ends the older link (400); the newer one works', async () => {
    const c = new TestClient(t.app);
    await c.register('twice@example.com', 'first password 1');
    const asker = new TestClient(t.app);
    await asker.refresh();
    const tokens = async (n: number) => {
      await expect
        .poll(() => t.mail().filter((m) => m.to.includes('twice@example.com')).length)
        .toBe(n);
      return t
        .mail()
        .filter((m) => m.to.includes('twice@example.com'))
        .map((m) => m.body.match(/reset-password\?token=([\w-]+)/)![1]);
    };
    await asker.post('/api/auth/password-reset', { email: 'twice@example.com' }).expect(202);
    const [older] = await tokens(1);
    await asker.post('/api/auth/password-reset', { email: 'twice@example.com' }).expect(202);
    const newer = (await tokens(2)).find((tk) => tk !== older)!;
    const stale = await asker.post('/api/auth/password-reset/confirm', {
      token: older,
      password: 'second password 2',
    });
    expect(stale.status).toBe(400);
    await asker
      .post('/api/auth/password-reset/confirm', { token: newer, password: 'third password 3' })
      .expect(200);
    expect(
      (await new TestClient(t.app).login('twice@example.com', 'third password 3')).status,
    ).toBe(200);
  });

  it('using a link ends every other link of the account, however it was issued', async () => {
    const c = new TestClient(t.app);
    const user = await c.register('both@example.com', 'first password 1');
    // Two live links at once, as two requests racing each other could leave them.
    const { createHash } = await import('node:crypto');
    const hash = (x: string) => createHash('sha256').update(x).digest('hex');
    const [a, b] = ['a'.repeat(43), 'b'.repeat(43)];
    for (const token of [a, b])
      await t.database.pool.query(
        `insert into password_resets (user_id, token_hash, expires_at) values ($1, $2, now() + interval '1 hour')`,
        [user.id, hash(token)],
      );
    await c
      .post('/api/auth/password-reset/confirm', { token: a, password: 'second password 2' })
      .expect(200);
    const asker = new TestClient(t.app);
    await asker.refresh();
    const other = await asker.post('/api/auth/password-reset/confirm', {
      token: b,
      password: 'third password 3',
    });
    expect(other.status).toBe(400);
  });

  it('refuses an expired token', async () => {
    const c = new TestClient(t.app);
    await c.register('late@example.com', 'late password 1');
    await c.post('/api/auth/password-reset', { email: 'late@example.com' }).expect(202);
    const mail = await waitForMail(t, 'late@example.com');
    const token = mail.body.match(/token=([\w-]+)/)![1];
    await t.database.pool.query(
      `update password_resets set expires_at = now() - interval '1 minute'`,
    );
    const res = await c.post('/api/auth/password-reset/confirm', {
      token,
      password: 'late password 2',
    });
    expect(res.status).toBe(400);
  });
});
