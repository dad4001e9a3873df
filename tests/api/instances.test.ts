import { randomBytes } from 'node:crypto';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '../../server/app';
import { connect, type Database } from '../../server/db/client';
import { createMailer } from '../../server/mail/mailer';
import { createTestApp, testHasher, TestClient, waitForMail, type TestApp } from '../helpers/app';

let t: TestApp;
let secondDb: Database;
let second: ReturnType<typeof createApp>;
const secret = randomBytes(32).toString('hex');

beforeAll(async () => {
  t = await createTestApp({ sessionSecret: secret });
  // A second app instance on the same database, as behind a load balancer.
  secondDb = connect(t.databaseUrl, 2);
  second = createApp({
    database: secondDb,
    mailer: createMailer({ sinkPort: t.sink.port, from: 'test@fairsheet.local' }),
    hasher: testHasher,
    sessionSecret: secret,
    appUrl: 'http://127.0.0.1:3000',
    production: false,
  });
});
afterAll(async () => {
  await secondDb.pool.end();
  await t.close();
});

describe('state lives in PostgreSQL, not in the process', () => {
  it('a session made on one instance is signed in on another (and survives a restart)', async () => {
    const c = new TestClient(t.app);
    await c.register('shared.session@example.com');
    const cookie = (await c.get('/api/auth/session')).request.cookies;
    const res = await request(second).get('/api/auth/session').set('Cookie', cookie);
    expect(res.body.user?.email).toBe('shared.session@example.com');
  });

  it('failed sign-ins counted on one instance are counted on the other', async () => {
    const c = new TestClient(t.app);
    await c.register('counted@example.com', 'the right password');
    for (let i = 0; i < 10; i++)
      expect((await c.login('counted@example.com', `wrong ${i}`)).status).toBe(401);
    const other = request.agent(second);
    const session = await other.get('/api/auth/session');
    const res = await other
      .post('/api/auth/login')
      .set('X-CSRF-Token', session.body.csrfToken)
      .send({ email: 'counted@example.com', password: 'the right password' });
    expect(res.status).toBe(429);
  });
});

describe('the local mail page', () => {
  it('/dev/mail lists the mail the sink received, outside production', async () => {
    const c = new TestClient(t.app);
    await c.register('listed@example.com');
    await c.post('/api/auth/password-reset', { email: 'listed@example.com' }).expect(202);
    await waitForMail(t, 'listed@example.com');
    const page = await request(t.app).get('/dev/mail').expect(200);
    expect(page.text).toContain('listed@example.com');
    expect(page.text).toMatch(/<a href="http:\/\/127\.0\.0\.1:3000\/reset-password\?token=/);
  });

  it('/dev/mail does not exist in production', async () => {
    const production = createApp({
      database: secondDb,
      mailer: createMailer({ sinkPort: t.sink.port, from: 'test@fairsheet.local' }),
      hasher: testHasher,
      sessionSecret: secret,
      appUrl: 'https://fairsheet.example.com',
      production: true,
      mailDir: t.sink.dir,
    });
    expect((await request(production).get('/dev/mail')).status).toBe(404);
    expect((await request(t.app).get('/dev/mail')).status).toBe(200);
  });
});
