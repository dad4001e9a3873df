// PostgreSQL stopping and starting again under a running app (in this process, listening on a
// port). The database is a cluster of this file's own, never the run's shared one.
import { chmodSync, mkdtempSync } from 'node:fs';
import http, { type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { tmpdir } from 'node:os';
import path from 'node:path';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { removeCluster, startCluster, type Cluster } from '../../scripts/lib/system';
import { applyMigrations, connect } from '../../server/db/client';
import { createTestApp, type TestApp } from '../helpers/app';
import { freePort } from '../helpers/net';
import { HttpClient, waitFor, type Answer } from '../helpers/server-process';

let root: string;
let cluster: Cluster | undefined;
let clusterRunning = false;
let t: TestApp | undefined;
let server: Server | undefined;
let baseUrl: string;
let builder: HttpClient;
let projectId: string;
const errorLines: string[] = [];
// A connection per request. The cluster is stopped and started by blocking calls in this very
// process, which stalls the app and its clients alike; kept-alive connections would then time
// out at both ends at once, and reusing one could meet a reset: a race of the test's making.
const oneShot = new http.Agent({ keepAlive: false });

function startDatabase(port: number) {
  cluster = startCluster({ dir: path.join(root, 'postgres'), port, unsafeFast: true });
  clusterRunning = true;
}

function stopDatabase() {
  // pg_ctl -m fast: open sessions are ended (57P01), new connections refused, then it is down.
  cluster!.stop();
  clusterRunning = false;
}

beforeAll(async () => {
  root = mkdtempSync(path.join(tmpdir(), 'fairsheet-restart-'));
  // mkdtemp makes the folder private; the postgres user must be able to enter it.
  chmodSync(root, 0o755);
  startDatabase(await freePort());
  cluster!.createDatabase('fairsheet');
  const setup = connect(cluster!.url('fairsheet'), 1);
  await applyMigrations(setup.db);
  await setup.pool.end();

  t = await createTestApp({ databaseUrl: cluster!.url('fairsheet') });
  server = await new Promise<Server>((resolve) => {
    const s = t!.app.listen(0, '127.0.0.1', () => resolve(s));
  });
  baseUrl = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  builder = new HttpClient(baseUrl, oneShot);
  await builder.register('restart.builder@example.com');
  projectId = (await builder.request<{ id: string }>('POST', '/api/projects', { name: 'Restarts' }))
    .body.id;

  // What the app logs as an error: unexpected ones must not appear.
  vi.spyOn(console, 'error').mockImplementation((...args: unknown[]) => {
    errorLines.push(args.map((a) => (a instanceof Error ? a.stack : String(a))).join(' '));
  });
});

afterAll(async () => {
  vi.restoreAllMocks();
  server?.closeAllConnections();
  await new Promise((resolve) => (server ? server.close(resolve) : resolve(undefined)));
  await t?.close().catch(() => {});
  if (cluster && clusterRunning) cluster.stop();
  removeCluster(root);
});

const url = (p: string) => `/api/projects/${projectId}${p}`;

function model(values: number[]) {
  return {
    format: 'fairsheet.model',
    version: 1,
    units: 'in',
    dimensions: values.map((value, i) => ({ name: `d${i}`, kind: 'stated', value })),
    relations: [],
  };
}

function expectUnavailable(res: Answer<Record<string, unknown>>) {
  expect(res.status).toBe(503);
  expect(res.headers['content-type']).toMatch(/^application\/json/);
  expect(res.body).toEqual({
    error: {
      code: 'unavailable',
      message: 'The database is not answering. Try again in a moment.',
    },
  });
}

const unexpected = () => errorLines.filter((l) => !l.startsWith('[db] idle client error'));

describe('the database stops and starts again while the app runs', { timeout: 120_000 }, () => {
  it('a save waiting on a row lock when the database stops answers 503, and the process stays up', async () => {
    expect(
      (await builder.request('PUT', url('/model'), { revision: 0, model: model([1]) })).status,
    ).toBe(200);

    // Another session holds the model's row, so the save waits inside its transaction.
    const holder = new pg.Client({ connectionString: cluster!.url('fairsheet') });
    holder.on('error', () => {}); // its server is about to go away
    await holder.connect();
    await holder.query('begin');
    await holder.query('select 1 from project_models where project_id = $1 for update', [
      projectId,
    ]);
    const pending = builder.request('PUT', url('/model'), { revision: 1, model: model([1, 2]) });
    await waitFor('the save waiting on the lock', async () => {
      const { rows } = await holder.query(
        `select 1 from pg_stat_activity where wait_event_type = 'Lock' and datname = 'fairsheet'`,
      );
      return rows.length > 0;
    });

    stopDatabase();
    expectUnavailable(await pending);
    expect(unexpected()).toEqual([]);
  });

  it('while it is down every request answers 503 with a JSON message, signed in or not', async () => {
    const health = await builder.request('GET', '/api/health');
    expect(health.status).toBe(503);
    expect(health.body).toEqual({ ok: false, db: 'down' });

    // The session is read from the database (connect-pg-simple) before any route runs.
    expectUnavailable(await builder.request('GET', '/api/auth/session'));
    expectUnavailable(await builder.request('GET', url('/model')));
    expectUnavailable(
      await builder.request('PUT', url('/model'), { revision: 1, model: model([3]) }),
    );
    // A visitor without a cookie: the new session cannot be written.
    expectUnavailable(await new HttpClient(baseUrl, oneShot).request('GET', '/api/auth/session'));
    // Many at once, so the pool tries many connections.
    const burst = await Promise.all(
      Array.from({ length: 20 }, () => builder.request('GET', url('/history'))),
    );
    for (const res of burst) expectUnavailable(res);
    expect(unexpected()).toEqual([]);
  });

  it('after it starts again the same app answers, and the session cookie issued before is still signed in', async () => {
    startDatabase(cluster!.port);
    await waitFor('the app reaching the database again', async () => {
      const res = await builder.request('GET', '/api/health');
      return res.status === 200;
    });
    const session = await builder.request<{ user: { email: string } | null }>(
      'GET',
      '/api/auth/session',
    );
    expect(session.status).toBe(200);
    expect(session.body.user?.email).toBe('restart.builder@example.com');

    // The save cut off by the stop left nothing behind; the next one follows revision 1.
    const stored = await builder.request<{ revision: number }>('GET', url('/model'));
    expect(stored.body.revision).toBe(1);
    const saved = await builder.request<{ revision: number }>('PUT', url('/model'), {
      revision: 1,
      model: model([1, 4]),
    });
    expect(saved.status).toBe(200);
    expect(saved.body.revision).toBe(2);
    const history = await builder.request<{ entries: { revision: number }[] }>(
      'GET',
      url('/history'),
    );
    expect(history.body.entries.map((e) => e.revision)).toEqual([2, 1, 0]);
    expect(unexpected()).toEqual([]);
  });

  it('a restart under a steady stream of reads and saves: every request is answered 200, 409 or 503, never 500', async () => {
    const statuses: number[] = [];
    let running = true;
    const loops = Array.from({ length: 6 }, async (_, i) => {
      const c = new HttpClient(baseUrl, oneShot);
      c.cookie = builder.cookie;
      c.csrf = builder.csrf;
      while (running) {
        try {
          const read = await c.request<{ revision: number }>('GET', url('/model'));
          statuses.push(read.status);
          if (read.status !== 200) {
            // A 503 comes back at once: pause as a client would, not spin on two cores.
            await new Promise((r) => setTimeout(r, 50));
            continue;
          }
          const saved = await c.request('PUT', url('/model'), {
            revision: read.body.revision,
            model: model([i, read.body.revision]),
          });
          statuses.push(saved.status);
        } catch {
          statuses.push(0); // no answer at all: asserted below
          await new Promise((r) => setTimeout(r, 50));
        }
      }
    });
    const count = (status: number) => statuses.filter((s) => s === status).length;
    try {
      await waitFor('saves going through', () => count(200) >= 20);
      stopDatabase();
      await waitFor('requests answered 503 while it is down', () => count(503) >= 20);
      startDatabase(cluster!.port);
      const okBefore = count(200);
      await waitFor('saves going through again', () => count(200) >= okBefore + 20);
    } finally {
      running = false;
      await Promise.all(loops);
    }
    expect(statuses.filter((s) => ![200, 409, 503].includes(s))).toEqual([]);
    expect(unexpected()).toEqual([]);

    // The history is whole: one row per revision, the last one the stored model.
    const { rows } = await t!.database.pool.query(
      `select m.revision, (select count(*)::int from model_revisions r where r.project_id = m.project_id) as rows,
              (select max(revision) from model_revisions r where r.project_id = m.project_id) as last
         from project_models m where m.project_id = $1`,
      [projectId],
    );
    expect(rows[0].rows).toBe(rows[0].revision + 1);
    expect(rows[0].last).toBe(rows[0].revision);
  });
});
