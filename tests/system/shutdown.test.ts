// Stopping the app with SIGTERM (what a service manager sends; Ctrl-C sends SIGINT, handled the
// same way), with the app in its own process on a database of the run's cluster.
import { mkdtempSync, rmSync } from 'node:fs';
import http from 'node:http';
import net from 'node:net';
import { tmpdir } from 'node:os';
import path from 'node:path';
import pg from 'pg';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { kestrelModel } from '../../server/demo/kestrel-model';
import { createTestDatabase } from '../helpers/app';
import {
  HttpClient,
  killServerProcesses,
  serverEnv,
  startServerProcess,
  waitFor,
  type ServerProcess,
} from '../helpers/server-process';

let database: Awaited<ReturnType<typeof createTestDatabase>>;
const folders: string[] = [];

beforeAll(async () => {
  database = await createTestDatabase();
});
afterEach(() => killServerProcesses());
afterAll(async () => {
  await killServerProcesses();
  await database?.drop();
  for (const dir of folders) rmSync(dir, { recursive: true, force: true });
});

async function start(
  graceSeconds: number,
  extra: Record<string, string> = {},
): Promise<ServerProcess> {
  const dir = mkdtempSync(path.join(tmpdir(), 'fairsheet-stop-'));
  folders.push(dir);
  return startServerProcess(
    await serverEnv(database.url, dir, { SHUTDOWN_GRACE_SECONDS: String(graceSeconds), ...extra }),
  );
}

async function signedInProject(proc: ServerProcess, email: string) {
  const c = new HttpClient(proc.baseUrl);
  await c.register(email);
  const project = await c.request<{ id: string }>('POST', '/api/projects', { name: email });
  expect(project.status).toBe(201);
  return { c, projectId: project.body.id };
}

function saveBody(revision: number, values: number[]) {
  return JSON.stringify({
    revision,
    model: {
      format: 'fairsheet.model',
      version: 1,
      units: 'in',
      dimensions: values.map((value, i) => ({ name: `d${i}`, kind: 'stated', value })),
      relations: [],
    },
  });
}

/**
 * A save whose body arrives in two halves: the server has the request once it answers
 * "100 Continue" (`accepted`), and answers only after `finish()` sends the rest.
 */
function slowSave(proc: ServerProcess, c: HttpClient, projectId: string, body: string) {
  const bytes = Buffer.from(body);
  const half = Math.floor(bytes.length / 2);
  const req = http.request(`${proc.baseUrl}/api/projects/${projectId}/model`, {
    method: 'PUT',
    agent: false,
    headers: {
      Cookie: c.cookie,
      'X-CSRF-Token': c.csrf,
      'Content-Type': 'application/json',
      'Content-Length': String(bytes.length),
      Expect: '100-continue',
    },
  });
  const accepted = new Promise<void>((resolve) => req.once('continue', () => resolve()));
  const result = new Promise<{
    status: number;
    headers: http.IncomingHttpHeaders;
    text: string;
  }>((resolve, reject) => {
    req.once('error', reject);
    req.once('response', (res) => {
      let text = '';
      res.setEncoding('utf8');
      res.on('data', (chunk: string) => (text += chunk));
      res.on('end', () => resolve({ status: res.statusCode!, headers: res.headers, text }));
      res.on('error', reject);
    });
  });
  req.write(bytes.subarray(0, half));
  // Settled by the test (an answer or a cut-off), never an unhandled rejection.
  result.catch(() => {});
  return {
    accepted,
    result,
    finish: () => req.end(bytes.subarray(half)),
  };
}

/** Resolves true when a new TCP connection to the port is refused. */
function refused(port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const socket = net.connect(port, '127.0.0.1');
    socket.once('connect', () => {
      socket.destroy();
      resolve(false);
    });
    socket.once('error', (err: NodeJS.ErrnoException) => resolve(err.code === 'ECONNREFUSED'));
  });
}

/** An idle kept-alive connection: one answered request on a keep-alive agent, socket kept. */
async function idleKeptAliveSocket(proc: ServerProcess): Promise<net.Socket> {
  const agent = new http.Agent({ keepAlive: true, maxSockets: 1 });
  return new Promise((resolve, reject) => {
    const req = http.get(`${proc.baseUrl}/api/health`, { agent }, (res) => {
      res.resume();
      res.on('end', () => resolve(req.socket!));
    });
    req.once('error', reject);
  });
}

const poolMisuse = /Cannot use a pool after calling end/;

describe('stopping on SIGTERM', { timeout: 240_000 }, () => {
  it('a save in flight gets its whole 200; new connections are refused, idle ones closed; the process exits 0', async () => {
    const proc = await start(60);
    const { c, projectId } = await signedInProject(proc, 'stop.slow@example.com');
    const idle = await idleKeptAliveSocket(proc);
    let idleClosed = false;
    idle.once('close', () => (idleClosed = true));

    const save = slowSave(proc, c, projectId, saveBody(0, [1, 2, 3]));
    await save.accepted;
    proc.child.kill('SIGTERM');
    await proc.waitForOutput(/SIGTERM: stopping/);

    await waitFor('new connections refused', () => refused(proc.port));
    await waitFor('the idle kept-alive connection closed by the server', () => idleClosed);
    expect(proc.child.exitCode).toBeNull(); // still finishing the save

    save.finish();
    const answer = await save.result;
    expect(answer.status).toBe(200);
    expect(JSON.parse(answer.text)).toMatchObject({ revision: 1 });
    expect(answer.headers.connection).toBe('close');

    expect(await proc.exited).toEqual({ code: 0, signal: null });
    expect(proc.output()).not.toMatch(poolMisuse);
    expect(proc.output()).not.toMatch(/unexpected error|cut off/);
    const client = new pg.Client({ connectionString: database.url });
    await client.connect();
    const { rows } = await client.query(
      'select revision from project_models where project_id = $1',
      [projectId],
    );
    await client.end();
    expect(rows).toEqual([{ revision: 1 }]);
  });

  it('a request still running when the grace period ends is cut off, and the process still exits 0', async () => {
    const proc = await start(1);
    const { c, projectId } = await signedInProject(proc, 'stop.stuck@example.com');
    const stuck = slowSave(proc, c, projectId, saveBody(0, [4]));
    await stuck.accepted;
    proc.child.kill('SIGTERM');
    // The rest of the body never comes.
    await expect(stuck.result).rejects.toThrow(/socket hang up|ECONNRESET/);
    expect(await proc.exited).toEqual({ code: 0, signal: null });
    expect(proc.output()).toMatch(/1 requests still running after 1 s were cut off/);
    expect(proc.output()).not.toMatch(poolMisuse);
  });

  it('under a stream of kept-alive requests, dropped by their clients as it stops: whole answers or refusals, never a 5xx, never the pool after its end', async () => {
    const proc = await start(60, { SOLVE_RATE_LIMIT: '1000000' });
    const { c, projectId } = await signedInProject(proc, 'stop.busy@example.com');
    const statuses: number[] = [];
    const aborts = new AbortController();
    let stop = false;
    const call = async (method: string, url: string, body?: string) => {
      const res = await fetch(proc.baseUrl + url, {
        method,
        headers: { Cookie: c.cookie, 'X-CSRF-Token': c.csrf, 'Content-Type': 'application/json' },
        body,
        signal: aborts.signal,
      });
      statuses.push(res.status);
      return { status: res.status, body: (await res.json()) as { revision: number } };
    };
    // Fetch keeps its connections alive. Each loop reads the model, saves it again and has the
    // demo model solved (some tens of milliseconds of work each, so answers queue up).
    const solve = JSON.stringify({ model: kestrelModel });
    const loops = Array.from({ length: 12 }, async (_, i) => {
      while (!stop) {
        try {
          const read = await call('GET', `/api/projects/${projectId}/model`);
          if (read.status === 200) {
            await call(
              'PUT',
              `/api/projects/${projectId}/model`,
              saveBody(read.body.revision, [i, read.body.revision]),
            );
          }
          await call('POST', '/api/solve', solve);
        } catch {
          // Refused (the server stopped listening), closed, or dropped by us: again until told.
          await new Promise((r) => setTimeout(r, 20));
        }
      }
    });
    try {
      await waitFor('requests flowing', () => statuses.length >= 60);
      proc.child.kill('SIGTERM');
      await proc.waitForOutput(/SIGTERM: stopping/);
      // Every client drops its request and connection, as a load tool does when its time is up:
      // the handlers of those requests run on, and must still find the pool open.
      aborts.abort();
      expect(await proc.exited).toEqual({ code: 0, signal: null });
    } finally {
      stop = true;
      await Promise.all(loops);
    }
    expect(statuses.filter((s) => s !== 200 && s !== 409)).toEqual([]);
    expect(proc.output()).not.toMatch(poolMisuse);
    expect(proc.output()).not.toMatch(/unexpected error|after the answer/);
  });
});
