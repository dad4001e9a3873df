import { randomBytes } from 'node:crypto';
import { PassThrough } from 'node:stream';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '../../server/app';
import { createMailer } from '../../server/mail/mailer';
import { createTestApp, testHasher, waitForMail, type TestApp } from '../helpers/app';

let t: TestApp;
let logged = '';
let app: ReturnType<typeof createApp>;

beforeAll(async () => {
  t = await createTestApp();
  const stream = new PassThrough();
  stream.on('data', (c: Buffer) => (logged += c.toString()));
  app = createApp({
    database: t.database,
    mailer: createMailer({ sinkPort: t.sink.port, from: 'test@fairsheet.local' }),
    hasher: testHasher,
    sessionSecret: randomBytes(32).toString('hex'),
    appUrl: 'http://127.0.0.1:3000',
    production: false,
    logLevel: 'info',
    logStream: stream,
    storage: t.storage,
  });
});
afterAll(() => t.close());

describe('request logs', () => {
  it('are one JSON line per request and never hold passwords, tokens or session ids', async () => {
    const agent = request.agent(app);
    const session = await agent.get('/api/auth/session');
    const csrf = session.body.csrfToken as string;
    const password = 'a secret password 123';
    await agent
      .post('/api/auth/register')
      .set('X-CSRF-Token', csrf)
      .send({ name: 'Logged', email: 'logged@example.com', password })
      .expect(202);
    const sid = String((await agent.get('/api/auth/session')).request.cookies);
    await agent
      .post('/api/auth/password-reset')
      .set('X-CSRF-Token', (await agent.get('/api/auth/session')).body.csrfToken)
      .send({ email: 'logged@example.com' });
    // The registration's confirmation link (the address has no account until it is opened).
    const token = (await waitForMail(t, 'logged@example.com')).body.match(/token=([\w-]+)/)![1];
    await agent.get(`/api/invitations/${token}`);
    await new Promise((r) => setTimeout(r, 50));

    const lines = logged.trim().split('\n');
    expect(lines.length).toBeGreaterThanOrEqual(5);
    for (const line of lines) expect(() => JSON.parse(line)).not.toThrow();
    expect(logged).toContain('/api/auth/register');
    const registered = lines.map((l) => JSON.parse(l)).find((l) => l.req?.method === 'POST');
    expect(registered.res).toEqual({ statusCode: 202 });
    expect(logged).not.toContain(password);
    expect(logged).not.toContain(csrf);
    expect(logged).not.toContain(token);
    const cookieValue = sid.split('=')[1]?.split(';')[0] ?? 'none';
    expect(cookieValue.length).toBeGreaterThan(10);
    expect(logged).not.toContain(cookieValue);
  });
});
