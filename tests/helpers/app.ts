import { randomBytes } from 'node:crypto';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import pg from 'pg';
import request from 'supertest';
import { inject } from 'vitest';
import { createApp, type AppDeps } from '../../server/app';
import { createPasswordHasher } from '../../server/auth/passwords';
import { connect, type Database } from '../../server/db/client';
import { createMailer } from '../../server/mail/mailer';
import { readMailbox, startMailSink, type MailSink } from '../../server/mail/sink';
import type { SolvePool } from '../../server/solve/pool';
import { createLocalStorage, type BlobStorage } from '../../server/storage';

/** A fresh database copied from the run's migrated template. */
export async function createTestDatabase(): Promise<{
  url: string;
  name: string;
  drop: () => Promise<void>;
}> {
  const port = inject('pgPort');
  const name = `t_${randomBytes(6).toString('hex')}`;
  const admin = new pg.Client({
    connectionString: `postgres://postgres@127.0.0.1:${port}/postgres`,
  });
  await admin.connect();
  await admin.query(`CREATE DATABASE "${name}" TEMPLATE "${inject('templateDb')}"`);
  await admin.end();
  return {
    name,
    url: `postgres://postgres@127.0.0.1:${port}/${name}`,
    async drop() {
      const c = new pg.Client({
        connectionString: `postgres://postgres@127.0.0.1:${port}/postgres`,
      });
      await c.connect();
      await c.query(`DROP DATABASE IF EXISTS "${name}" WITH (FORCE)`);
      await c.end();
    },
  };
}

export const testHasher = createPasswordHasher(4);

export interface TestApp {
  app: ReturnType<typeof createApp>;
  database: Database;
  databaseUrl: string;
  sink: MailSink;
  mail: () => ReturnType<typeof readMailbox>;
  storage: BlobStorage;
  /** The local storage's folder (when the default temp-dir storage is used). */
  storageDir?: string;
  /** Where uploads are staged while checked; empty again after every request. */
  uploadTempDir: string;
  close: () => Promise<void>;
}

/** Each test app's sink, so a TestClient made from the app alone can read its mail. */
const testApps = new WeakMap<TestApp['app'], TestApp>();

/** The real app (createApp) on a real, fresh PostgreSQL database, with a real SMTP sink. */
export async function createTestApp(
  options: {
    clientDir?: string;
    appUrl?: string;
    sessionSecret?: string;
    /** Default: local storage in a fresh temp folder. */
    storage?: BlobStorage;
    uploadMaxBytes?: number;
    /** A migrated database to use (and leave) instead of a fresh copy of the template. */
    databaseUrl?: string;
    /** POST /api/solve calls per user per minute (default: the app's, 120). */
    solvesPerMinute?: number;
    /** Express `trust proxy`, as TRUST_PROXY sets it (default: unset, no proxy trusted). */
    trustProxy?: string;
    /** Where solves run (default: the process's pool). */
    solver?: SolvePool;
    /**
     * Sign-in and registration limits. Default: the app's, except registrations per client
     * address, which a test file (all from 127.0.0.1) would soon use up.
     */
    authLimits?: AppDeps['authLimits'];
    /**
     * Invitation limits. Default: the app's, except invitations per project, which a test
     * file's one project would soon use up.
     */
    invitationLimits?: AppDeps['invitationLimits'];
    /** Default: bcrypt at cost 4 (testHasher). */
    hasher?: AppDeps['hasher'];
  } = {},
): Promise<TestApp> {
  const testDb = options.databaseUrl
    ? { url: options.databaseUrl, drop: async () => {} }
    : await createTestDatabase();
  const database = connect(testDb.url, 5);
  const sink = await startMailSink({
    port: 0,
    dir: mkdtempSync(path.join(tmpdir(), 'fairsheet-mail-')),
  });
  const storageDir = options.storage
    ? undefined
    : mkdtempSync(path.join(tmpdir(), 'fairsheet-uploads-'));
  const storage = options.storage ?? createLocalStorage(storageDir!);
  const uploadTempDir = mkdtempSync(path.join(tmpdir(), 'fairsheet-incoming-'));
  const app = createApp({
    database,
    mailer: createMailer({ sinkPort: sink.port, from: 'Fairsheet <test@fairsheet.local>' }),
    storage,
    uploadMaxBytes: options.uploadMaxBytes,
    uploadTempDir,
    solvesPerMinute: options.solvesPerMinute,
    trustProxy: options.trustProxy,
    solver: options.solver,
    authLimits: { registrationsPerClient: 1000, ...options.authLimits },
    invitationLimits: { perProject: 1000, ...options.invitationLimits },
    hasher: options.hasher ?? testHasher,
    sessionSecret: options.sessionSecret ?? randomBytes(32).toString('hex'),
    appUrl: options.appUrl ?? 'http://127.0.0.1:3000',
    production: false,
    mailDir: sink.dir,
    clientDir: options.clientDir,
  });
  const testApp: TestApp = {
    app,
    database,
    databaseUrl: testDb.url,
    sink,
    mail: () => readMailbox(sink.dir),
    storage,
    storageDir,
    uploadTempDir,
    async close() {
      await sink.close();
      // As the app's own stop does: pool.end() waits for every client in use, and a client left
      // waiting on a connection the database dropped (the restart suite) would hold it for good.
      await Promise.race([
        database.pool.end(),
        new Promise<void>((resolve) => setTimeout(resolve, 5000).unref()),
      ]);
      await testDb.drop();
      for (const dir of [storageDir, uploadTempDir]) {
        if (dir) rmSync(dir, { recursive: true, force: true });
      }
    },
  };
  testApps.set(app, testApp);
  return testApp;
}

/** A supertest agent that keeps its cookie and sends the CSRF token on every change. */
export class TestClient {
  readonly agent: ReturnType<typeof request.agent>;
  csrf = '';

  constructor(readonly app: TestApp['app']) {
    this.agent = request.agent(app);
  }

  async refresh() {
    const res = await this.agent.get('/api/auth/session').expect(200);
    this.csrf = res.body.csrfToken;
    return res.body;
  }

  get(url: string) {
    return this.agent.get(url);
  }
  post(url: string, body?: object) {
    return this.agent.post(url).set('X-CSRF-Token', this.csrf).send(body);
  }
  patch(url: string, body?: object) {
    return this.agent.patch(url).set('X-CSRF-Token', this.csrf).send(body);
  }
  put(url: string, body?: object) {
    return this.agent.put(url).set('X-CSRF-Token', this.csrf).send(body);
  }
  delete(url: string) {
    return this.agent.delete(url).set('X-CSRF-Token', this.csrf);
  }

  /**
   * Registers as a person does: the answer (202) says to check the mail, and the mailed link
   * makes the account and signs in. The followed mail is taken out of the sink, so a later
   * wait for mail to this address sees only what came after.
   */
  async register(email: string, password = 'correct horse battery', name = 'Test Builder') {
    const t = testApps.get(this.app);
    if (!t) throw new Error('register: the app was not made by createTestApp');
    await this.refresh();
    await this.post('/api/auth/register', { name, email, password }).expect(202);
    const mail = await waitForMail(t, email, 5000, /\/confirm-email\?token=/);
    rmSync(path.join(t.sink.dir, mail.file), { force: true });
    const token = mail.body.match(/\/confirm-email\?token=([\w-]+)/)![1];
    const res = await this.post('/api/auth/confirm-email', { token }).expect(200);
    this.csrf = res.body.csrfToken;
    return res.body.user as { id: string; email: string };
  }

  async login(email: string, password: string) {
    await this.refresh();
    const res = await this.post('/api/auth/login', { email, password });
    if (res.status === 200) this.csrf = res.body.csrfToken;
    return res;
  }
}

/**
 * Polls the sink until a message for `to` (whose body matches `body`, when given) arrives
 * (mail is sent after the HTTP answer); answers the newest.
 */
export async function waitForMail(t: TestApp, to: string, timeoutMs = 5000, body?: RegExp) {
  const address = to.toLowerCase();
  const start = Date.now();
  while (Date.now() - start < timeoutMs) {
    const found = t
      .mail()
      .find((m) => m.to.toLowerCase().includes(address) && (!body || body.test(m.body)));
    if (found) return found;
    await new Promise((r) => setTimeout(r, 50));
  }
  throw new Error(`no mail to ${to} within ${timeoutMs} ms`);
}

/** The first link under `prefix` (e.g. `${baseUrl}/invitations/`) in the mail sent to `to`. */
export async function mailedLink(t: TestApp, to: string, prefix: string): Promise<string> {
  const escaped = prefix.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
  const pattern = new RegExp(`${escaped}[A-Za-z0-9_-]+`);
  const mail = await waitForMail(t, to, 5000, pattern);
  const link = mail.body.match(pattern)?.[0];
  if (!link) throw new Error(`no link under ${prefix} in the mail to ${to}:\n${mail.body}`);
  return link;
}
