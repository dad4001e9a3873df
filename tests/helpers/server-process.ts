// The app in its own Node process (tests/helpers/serve.ts), for tests that kill it, restart it or
// stop it with a signal; and a small HTTP client that keeps a cookie and the CSRF token.
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdirSync } from 'node:fs';
import http from 'node:http';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { freePort } from './net';

const root = fileURLToPath(new URL('../..', import.meta.url));
const entry = fileURLToPath(new URL('./serve.ts', import.meta.url));

export interface ServerProcess {
  baseUrl: string;
  port: number;
  child: ChildProcess;
  /** Everything the process wrote so far, standard output and error interleaved. */
  output(): string;
  /** Resolves once the process has ended. */
  exited: Promise<{ code: number | null; signal: NodeJS.Signals | null }>;
  /** Resolves when the output matches `pattern`. */
  waitForOutput(pattern: RegExp, timeoutMs?: number): Promise<void>;
}

const running = new Set<ServerProcess>();

/** Polls `check` every 50 ms until it answers true; throws `what` after `timeoutMs`. */
export async function waitFor(
  what: string,
  check: () => boolean | Promise<boolean>,
  timeoutMs = 60_000,
): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (!(await check())) {
    if (Date.now() > deadline) throw new Error(`timed out after ${timeoutMs} ms: ${what}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

/** The environment of a server on `databaseUrl` keeping its files under `dataDir`. */
export async function serverEnv(
  databaseUrl: string,
  dataDir: string,
  extra: Record<string, string> = {},
): Promise<Record<string, string>> {
  const staging = path.join(dataDir, 'incoming');
  mkdirSync(staging, { recursive: true });
  return {
    PATH: process.env.PATH ?? '/usr/bin:/bin',
    HOME: process.env.HOME ?? dataDir,
    // Uploads are staged here, so a killed upload's leftovers stay with the test.
    UPLOAD_TEMP_DIR: staging,
    PORT: String(await freePort()),
    HOST: '127.0.0.1',
    DATABASE_URL: databaseUrl,
    FAIRSHEET_DATA_DIR: dataDir,
    FAIRSHEET_SMTP_PORT: String(await freePort()),
    UPLOAD_DIR: path.join(dataDir, 'uploads'),
    SESSION_SECRET: 'a-test-secret-that-is-long-enough-0123456789',
    FAIRSHEET_SEED_DEMO: '0',
    BCRYPT_COST: '4',
    LOG_LEVEL: 'error',
    ...extra,
  };
}

/** Starts the server process and resolves once /api/health answers 200. */
export async function startServerProcess(env: Record<string, string>): Promise<ServerProcess> {
  const port = Number(env.PORT);
  const baseUrl = `http://127.0.0.1:${port}`;
  const child = spawn(process.execPath, ['--import', 'tsx', entry], {
    cwd: root,
    env,
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let text = '';
  child.stdout!.on('data', (c: Buffer) => (text += c.toString()));
  child.stderr!.on('data', (c: Buffer) => (text += c.toString()));
  let ended = false;
  const exited = new Promise<{ code: number | null; signal: NodeJS.Signals | null }>((resolve) => {
    child.once('exit', (code, signal) => {
      ended = true;
      resolve({ code, signal });
    });
  });
  const proc: ServerProcess = {
    baseUrl,
    port,
    child,
    output: () => text,
    exited,
    waitForOutput: (pattern, timeoutMs = 30_000) =>
      waitFor(`output matching ${pattern}`, () => pattern.test(text), timeoutMs),
  };
  running.add(proc);
  void exited.then(() => running.delete(proc));
  try {
    await waitFor('the server answering /api/health', async () => {
      if (ended) throw new Error(`the server ended before it was ready:\n${text}`);
      const res = await fetch(`${baseUrl}/api/health`).catch(() => undefined);
      return res?.status === 200;
    });
  } catch (err) {
    child.kill('SIGKILL');
    throw err;
  }
  return proc;
}

/** For afterAll: kills every server process still running (a failed test leaves none behind). */
export async function killServerProcesses(): Promise<void> {
  await Promise.all(
    [...running].map((p) => {
      p.child.kill('SIGKILL');
      return p.exited;
    }),
  );
}

export interface Answer<T = Record<string, unknown>> {
  status: number;
  body: T;
  headers: http.IncomingHttpHeaders;
}

/**
 * A signed-in user of a running server: keeps the session cookie and the CSRF token. Requests go
 * through `agent` (by default its own keep-alive agent, so several clients really open several
 * connections).
 */
export class HttpClient {
  cookie = '';
  csrf = '';

  constructor(
    public baseUrl: string,
    private readonly agent: http.Agent = new http.Agent({ keepAlive: true }),
  ) {}

  async request<T = Record<string, unknown>>(
    method: string,
    url: string,
    body?: unknown,
  ): Promise<Answer<T>> {
    const headers: Record<string, string> = { 'X-CSRF-Token': this.csrf };
    if (this.cookie) headers.Cookie = this.cookie;
    let payload: Buffer | undefined;
    if (body instanceof FormData) {
      // Encoded as a browser would: multipart with a boundary.
      const encoded = new Request('http://localhost/', { method: 'POST', body });
      payload = Buffer.from(await encoded.arrayBuffer());
      headers['Content-Type'] = encoded.headers.get('content-type')!;
    } else if (body !== undefined) {
      headers['Content-Type'] = 'application/json';
      payload = Buffer.from(JSON.stringify(body));
    }
    if (payload) headers['Content-Length'] = String(payload.length);
    const res = await new Promise<http.IncomingMessage>((resolve, reject) => {
      const req = http.request(this.baseUrl + url, { method, headers, agent: this.agent }, resolve);
      req.once('error', reject);
      req.end(payload);
    });
    const chunks: Buffer[] = [];
    for await (const chunk of res) chunks.push(chunk as Buffer);
    const text = Buffer.concat(chunks).toString('utf8');
    const set = res.headers['set-cookie'];
    if (set?.length) this.cookie = set[0]!.split(';')[0]!;
    let parsed: unknown = text;
    if ((res.headers['content-type'] ?? '').includes('json')) parsed = JSON.parse(text);
    return { status: res.statusCode!, body: parsed as T, headers: res.headers };
  }

  async register(email: string, password = 'correct horse battery') {
    const session = await this.request<{ csrfToken: string }>('GET', '/api/auth/session');
    this.csrf = session.body.csrfToken;
    const res = await this.request<{ csrfToken: string; user: { id: string } }>(
      'POST',
      '/api/auth/register',
      { name: 'Test Builder', email, password },
    );
    if (res.status !== 202) throw new Error(`register answered ${res.status}`);
    // The account is made by the mailed link, read from the server's own /dev/mail page.
    let token: string | undefined;
    for (const start = Date.now(); !token && Date.now() - start < 5000;) {
      const box = await this.request<{ messages: { to: string; body: string }[] }>(
        'GET',
        '/dev/mail/messages.json',
      );
      token = box.body.messages
        .find((m) => m.to.includes(email))
        ?.body.match(/\/confirm-email\?token=([\w-]+)/)?.[1];
      if (!token) await new Promise((r) => setTimeout(r, 50));
    }
    if (!token) throw new Error(`no confirmation mail to ${email}`);
    const confirmed = await this.request<{ csrfToken: string; user: { id: string } }>(
      'POST',
      '/api/auth/confirm-email',
      { token },
    );
    if (confirmed.status !== 200) throw new Error(`confirm-email answered ${confirmed.status}`);
    this.csrf = confirmed.body.csrfToken;
    return confirmed.body.user;
  }
}
