// `npm run bench:api`: the app in its own process on loopback (a throwaway cluster, demo seeded),
// then autocannon with 50 connections for 20 s each on GET /api/projects/:id/model of a generated
// 2,000-dimension project and on POST /api/solve of the demo model. Prints requests/s, p50, p99,
// errors, CPU time per request (the app's, the load generator's, the machine's) and the app's RSS;
// the last line is one JSON object.
// BENCH_SECONDS shortens the runs; BENCH_NODE_ARGS passes flags to the server's node
// (e.g. `--cpu-prof --cpu-prof-dir=/tmp/prof` to see where its time goes).
import { spawn } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import autocannon from 'autocannon';
import { kestrelModel } from '../server/demo/kestrel-model';
import { demoBuilder, demoPassword } from '../server/demo/seed';
import { freePort } from '../tests/helpers/net';
import { projectRoot } from './lib/build';
import { cpuMs } from './lib/measure';

const seconds = Number(process.env.BENCH_SECONDS ?? 20);

function generatedModel(n: number) {
  const dimensions: object[] = [];
  const relations: object[] = [];
  for (let i = 0; i < n / 2; i++) {
    dimensions.push({
      name: `p${i}`,
      label: `Pitch ${i}`,
      kind: 'stated',
      value: `${1 + (i % 7)}/16`,
      part: `rail${i % 20}`,
    });
    dimensions.push({ name: `x${i}`, label: `Hole ${i}`, kind: 'derived', part: `rail${i % 20}` });
    // Chains of 25 from a fresh start, like rows of holes along a rail.
    relations.push({
      id: `c${i}`,
      expr: i % 25 === 0 ? `x${i} = p${i}` : `x${i} = x${i - 1} + p${i}`,
    });
  }
  return { format: 'fairsheet.model', version: 1, units: 'in', dimensions, relations };
}

/** CPU time all cores have spent busy since boot, ms (from /proc/stat). */
function machineBusyMs(): number {
  const [, ...ticks] = readFileSync('/proc/stat', 'utf8').split('\n')[0]!.trim().split(/\s+/);
  // proc(5): "cpu user nice system idle iowait irq softirq …"; Linux has printed all seven since 2.6.
  const [user, nice, system, , , irq, softirq] = ticks.map(Number);
  return (user! + nice! + system! + irq! + softirq!) * 10;
}

function rssMb(pid: number): number {
  const m = readFileSync(`/proc/${pid}/status`, 'utf8').match(/VmRSS:\s+(\d+) kB/);
  return m ? Number(m[1]) / 1024 : NaN;
}

async function main() {
  const dataDir = mkdtempSync(path.join(tmpdir(), 'fairsheet-bench-'));
  const port = await freePort();
  const base = `http://127.0.0.1:${port}`;
  const server = spawn(
    process.execPath,
    [
      ...(process.env.BENCH_NODE_ARGS ?? '').split(' ').filter(Boolean),
      '--import',
      'tsx',
      'scripts/start.ts',
    ],
    {
      cwd: projectRoot,
      env: {
        ...process.env,
        PORT: String(port),
        FAIRSHEET_DATA_DIR: dataDir,
        FAIRSHEET_PG_PORT: String(await freePort()),
        FAIRSHEET_SMTP_PORT: String(await freePort()),
        LOG_LEVEL: 'silent',
        BCRYPT_COST: '4',
        // The bench is one user asking as fast as it can; the limit is what it measures around.
        SOLVE_RATE_LIMIT: '100000000',
      },
      stdio: ['ignore', 'pipe', 'inherit'],
    },
  );
  try {
    for (let i = 0; ; i++) {
      if ((await fetch(`${base}/api/health`).catch(() => null))?.ok) break;
      if (i > 600) throw new Error('the app did not start');
      await new Promise((r) => setTimeout(r, 200));
    }
    let cookie = '';
    const call = async (method: string, url: string, body?: unknown, csrf = '') => {
      const res = await fetch(base + url, {
        method,
        headers: { 'Content-Type': 'application/json', Cookie: cookie, 'X-CSRF-Token': csrf },
        body: body === undefined ? undefined : JSON.stringify(body),
      });
      const set = res.headers.get('set-cookie');
      if (set) cookie = set.split(';')[0]!;
      return res.json();
    };
    let { csrfToken } = await call('GET', '/api/auth/session');
    ({ csrfToken } = await call(
      'POST',
      '/api/auth/login',
      { email: demoBuilder.email, password: demoPassword },
      csrfToken,
    ));
    const project = await call(
      'POST',
      '/api/projects',
      { name: 'Bench: 2,000 dimensions' },
      csrfToken,
    );
    await call(
      'PUT',
      `/api/projects/${project.id}/model`,
      { revision: 0, model: generatedModel(2000) },
      csrfToken,
    );
    // fetch unpacks what it gets: the header is the size on the wire, the text the JSON's.
    const modelProbe = await fetch(`${base}/api/projects/${project.id}/model`, {
      headers: { Cookie: cookie, 'Accept-Encoding': 'br' },
    });
    const wireSize = Number(modelProbe.headers.get('content-length'));
    const size = (await modelProbe.text()).length;

    const run = (title: string, opts: Partial<autocannon.Options>) => {
      const cpuBefore = cpuMs(server.pid!);
      const machineBefore = machineBusyMs();
      const ownBefore = process.cpuUsage();
      return autocannon({
        url: base,
        connections: 50,
        duration: seconds,
        headers: {
          Cookie: cookie,
          'X-CSRF-Token': csrfToken,
          'Content-Type': 'application/json',
          // As every browser asks; the model route answers its cached brotli then.
          'Accept-Encoding': 'gzip, deflate, br',
        },
        ...opts,
      }).then((r) => {
        const errors = r.errors + r.timeouts + r.non2xx;
        // CPU per request is steadier than latency when other work shares the machine. The app,
        // PostgreSQL and this load generator share its cores: each one's part is shown.
        const perRequest = (ms: number) => (ms / Math.max(1, r.requests.total)).toFixed(2);
        const own = process.cpuUsage(ownBefore);
        console.log(
          `${title}: ${r.requests.average.toFixed(0)} req/s, p50 ${r.latency.p50} ms, p99 ${r.latency.p99} ms, errors ${errors} (non-2xx ${r.non2xx}), server RSS ${rssMb(server.pid!).toFixed(0)} MB`,
        );
        console.log(
          `  CPU ms per request: app ${perRequest(cpuMs(server.pid!) - cpuBefore)}, load generator ${perRequest((own.user + own.system) / 1000)}, whole machine ${perRequest(machineBusyMs() - machineBefore)}`,
        );
        return { rps: r.requests.average, p99: r.latency.p99, errors };
      });
    };
    console.log(
      `GET /api/projects/:id/model answers ${(size / 1024).toFixed(0)} kB of JSON, ${(wireSize / 1024).toFixed(0)} kB in brotli`,
    );
    const probe = await fetch(`${base}/api/solve`, {
      method: 'POST',
      headers: { 'Content-Type': 'application/json', Cookie: cookie, 'X-CSRF-Token': csrfToken },
      body: JSON.stringify({ model: kestrelModel }),
    });
    if (!probe.ok)
      throw new Error(`POST /api/solve answered ${probe.status}: ${await probe.text()}`);
    const model = await run('GET model (2,000 dimensions)', {
      method: 'GET',
      url: `${base}/api/projects/${project.id}/model`,
    });
    const solve = await run('POST /api/solve (demo model)', {
      method: 'POST',
      url: `${base}/api/solve`,
      body: JSON.stringify({ model: kestrelModel }),
    });
    console.log(
      JSON.stringify({
        modelP99Ms: model.p99,
        modelRps: Math.round(model.rps),
        solveP99Ms: solve.p99,
        solveRps: Math.round(solve.rps),
        errors: model.errors + solve.errors,
      }),
    );
  } finally {
    server.kill('SIGINT');
    await new Promise((r) => server.once('exit', r));
    rmSync(dataDir, { recursive: true, force: true });
  }
}

main().catch((err: Error) => {
  console.error(`bench:api failed: ${err.message}`);
  process.exit(1);
});
