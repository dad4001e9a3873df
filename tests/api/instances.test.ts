import { randomBytes } from 'node:crypto';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '../../server/app';
import { connect, type Database } from '../../server/db/client';
import { createMailer } from '../../server/mail/mailer';
import { createTestApp, testHasher, TestClient, waitForMail, type TestApp } from '../helpers/app';
import { startFakeS3, type FakeS3 } from '../helpers/s3';
import { makePng } from '../helpers/sheet-files';

let t: TestApp;
let s3: FakeS3;
let secondDb: Database;
let second: ReturnType<typeof createApp>;
const secret = randomBytes(32).toString('hex');
const secondTempDir = mkdtempSync(path.join(tmpdir(), 'fairsheet-second-'));

beforeAll(async () => {
  // Two instances as behind a load balancer: one database, one bucket, nothing else shared
  // (each has its own pool, storage client, upload staging folder and in-process caches).
  s3 = await startFakeS3();
  t = await createTestApp({ sessionSecret: secret, storage: s3.storage() });
  secondDb = connect(t.databaseUrl, 2);
  second = createApp({
    database: secondDb,
    mailer: createMailer({ sinkPort: t.sink.port, from: 'test@fairsheet.local' }),
    storage: s3.storage(),
    uploadTempDir: secondTempDir,
    hasher: testHasher,
    sessionSecret: secret,
    appUrl: 'http://127.0.0.1:3000',
    production: false,
  });
});
afterAll(async () => {
  await secondDb.pool.end();
  await t.close();
  await s3.close();
  rmSync(secondTempDir, { recursive: true, force: true });
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

describe('work carries between instances', () => {
  let owner: TestClient;
  let cookie: string;
  let projectId: string;
  // The same browser session, its requests landing on either instance.
  const onSecond = {
    get: (url: string) => request(second).get(url).set('Cookie', cookie),
    put: (url: string, body: object) =>
      request(second).put(url).set('Cookie', cookie).set('X-CSRF-Token', owner.csrf).send(body),
    upload: (url: string, file: Buffer, filename: string) =>
      request(second)
        .post(url)
        .set('Cookie', cookie)
        .set('X-CSRF-Token', owner.csrf)
        .attach('file', file, { filename }),
  };

  beforeAll(async () => {
    owner = new TestClient(t.app);
    await owner.register('two.instances@example.com');
    cookie = (await owner.get('/api/auth/session')).request.cookies;
    projectId = (await owner.post('/api/projects', { name: 'Load balanced' }).expect(201)).body.id;
  });

  it('a sheet uploaded through one instance is listed and served byte for byte by the other', async () => {
    const png = makePng(16, 9, 5);
    const uploaded = await onSecond
      .upload(`/api/projects/${projectId}/sheets`, png, 'through-second.png')
      .expect(201);
    const [sheet] = uploaded.body.sheets;

    const listed = await owner.get(`/api/projects/${projectId}/sheets`).expect(200);
    expect(listed.body.sheets.map((s: { id: string }) => s.id)).toContain(sheet.id);
    const file = await owner.get(`/api/projects/${projectId}/sheets/${sheet.id}/file`).expect(200);
    expect(Buffer.compare(file.body as Buffer, png)).toBe(0);
  });

  it('a model saved through one instance is what the other answers next, never its cached copy', async () => {
    const url = `/api/projects/${projectId}/model`;
    // The second instance serves (and caches) revision 0 first.
    const before = await onSecond.get(url).expect(200);
    expect(before.body.revision).toBe(0);
    const model = {
      ...before.body.model,
      dimensions: [{ name: 'wheelbase', kind: 'stated', value: '5 1/2 in' }],
    };
    await owner.put(url, { revision: 0, model }).expect(200);

    const after = await onSecond.get(url).expect(200);
    expect(after.body.revision).toBe(1);
    expect(after.body.model.dimensions.map((d: { name: string }) => d.name)).toEqual(['wheelbase']);
    // And a stale save through the second instance is refused, as it would be on the first.
    await onSecond.put(url, { revision: 0, model }).expect(409);
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
