// `npm run bench:floor`: what this machine gives the stack before any of Fairsheet's own work, under
// the same load as bench:api (autocannon, 50 connections, loopback). Each layer is a server in its
// own process answering 9 kB (the size of the model answer in brotli) after one prepared
// PostgreSQL read: bare node:http, then Express 5, then helmet, then express-session with the
// app's own PostgreSQL session store. Prints requests/s, p50, p99 and the server's CPU per
// request for each; the last line is one JSON object of p99s. BENCH_SECONDS shortens the runs.
import { spawn } from 'node:child_process';
import { chmodSync, mkdtempSync, rmSync } from 'node:fs';
import http from 'node:http';
import { tmpdir } from 'node:os';
import path from 'node:path';
import autocannon from 'autocannon';
import express from 'express';
import helmet from 'helmet';
import pg from 'pg';
import { sessionMiddleware } from '../server/auth/session';
import { freePort } from '../tests/helpers/net';
import { cpuMs } from './lib/measure';
import { startCluster } from './lib/system';

const layers = ['node:http', 'express', 'express+helmet', 'express+helmet+session'] as const;
type Layer = (typeof layers)[number];

/** The server side: started as `bench-floor.ts serve <layer>` with PORT and DATABASE_URL set. */
async function serve(layer: Layer) {
  const pool = new pg.Pool({ connectionString: process.env.DATABASE_URL, max: 10 });
  const body = Buffer.alloc(9 * 1024, 'x');
  const answer = async (_req: unknown, res: http.ServerResponse) => {
    await pool.query({ name: 'read', text: 'SELECT sess FROM session LIMIT 1' });
    res.writeHead(200, { 'Content-Type': 'application/json', 'Content-Length': body.length });
    res.end(body);
  };
  let server: http.Server;
  if (layer === 'node:http') {
    server = http.createServer(answer);
  } else {
    const app = express();
    if (layer.includes('helmet')) app.use(helmet());
    if (layer.includes('session')) {
      app.use(sessionMiddleware({ pool, secret: 'bench-floor-'.repeat(4), secure: false }));
      app.post('/login', (req, res) => {
        req.session.userId = 'bench';
        req.session.save(() => res.end());
      });
    }
    app.get('/answer', answer);
    server = http.createServer(app);
  }
  server.listen(Number(process.env.PORT), '127.0.0.1', () => process.send?.('ready'));
  process.on('SIGTERM', () => process.exit(0));
}

async function main() {
  const seconds = Number(process.env.BENCH_SECONDS ?? 10);
  const dir = mkdtempSync(path.join(tmpdir(), 'fairsheet-floor-'));
  chmodSync(dir, 0o755); // the cluster inside runs as the postgres user when we are root
  const cluster = startCluster({ dir: path.join(dir, 'postgres'), port: await freePort() });
  const p99s: Partial<Record<Layer, number>> = {};
  try {
    cluster.createDatabase('floor');
    const url = cluster.url('floor');
    const setup = new pg.Client({ connectionString: url });
    await setup.connect();
    await setup.query(
      'CREATE TABLE session (sid varchar PRIMARY KEY, sess json NOT NULL, expire timestamp(6) NOT NULL)',
    );
    await setup.end();
    for (const layer of layers) {
      const port = await freePort();
      const server = spawn(
        process.execPath,
        ['--import', 'tsx', import.meta.filename, 'serve', layer],
        {
          env: { ...process.env, PORT: String(port), DATABASE_URL: url },
          stdio: ['ignore', 'inherit', 'inherit', 'ipc'],
        },
      );
      await new Promise((resolve, reject) => {
        server.once('message', resolve);
        server.once('exit', (code) => reject(new Error(`the ${layer} server exited (${code})`)));
      });
      let cookie = '';
      if (layer.includes('session')) {
        const res = await fetch(`http://127.0.0.1:${port}/login`, { method: 'POST' });
        cookie = res.headers.get('set-cookie')!.split(';')[0]!;
      }
      const before = cpuMs(server.pid!);
      const r = await autocannon({
        url: `http://127.0.0.1:${port}/answer`,
        connections: 50,
        duration: seconds,
        headers: { Cookie: cookie },
      });
      const perRequest = (cpuMs(server.pid!) - before) / Math.max(1, r.requests.total);
      console.log(
        `${layer.padEnd(24)} ${r.requests.average.toFixed(0).padStart(5)} req/s, p50 ${r.latency.p50} ms, p99 ${r.latency.p99} ms, errors ${r.errors + r.non2xx}, server CPU ${perRequest.toFixed(2)} ms per request`,
      );
      p99s[layer] = r.latency.p99;
      server.removeAllListeners('exit');
      server.kill('SIGTERM');
      await new Promise((r) => server.once('exit', r));
    }
  } finally {
    cluster.stop();
    rmSync(dir, { recursive: true, force: true });
  }
  console.log(JSON.stringify(p99s));
}

if (process.argv[2] === 'serve') {
  void serve(process.argv[3] as Layer);
} else {
  main().catch((err: Error) => {
    console.error(err.message);
    process.exit(1);
  });
}
