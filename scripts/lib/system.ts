// Machine set-up shared by `npm start` and the test run: PostgreSQL from Debian's packages,
// a private cluster on loopback, and Chromium for the browser suite.
import { execFileSync, spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import {
  existsSync,
  mkdirSync,
  readdirSync,
  rmSync,
  writeFileSync,
  chmodSync,
  appendFileSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';

const isRoot = process.getuid?.() === 0;

function log(message: string) {
  console.log(`[fairsheet] ${message}`);
}

function aptInstall(pkg: string) {
  log(`installing ${pkg} from Debian's packages (apt-get) …`);
  execFileSync('apt-get', ['update'], { stdio: 'ignore' });
  execFileSync('apt-get', ['install', '-y', '--no-upgrade', pkg], {
    stdio: ['ignore', 'ignore', 'inherit'],
    env: { ...process.env, DEBIAN_FRONTEND: 'noninteractive' },
  });
}

function findPgBinDir(): string | undefined {
  const root = '/usr/lib/postgresql';
  if (existsSync(root)) {
    const versions = readdirSync(root)
      .filter((v) => existsSync(path.join(root, v, 'bin', 'initdb')))
      .sort((a, b) => Number(a) - Number(b));
    const newest = versions.at(-1);
    if (newest) return path.join(root, newest, 'bin');
  }
  const config = spawnSync('pg_config', ['--bindir'], { encoding: 'utf8' });
  const dir = config.status === 0 ? config.stdout.trim() : '';
  return dir && existsSync(path.join(dir, 'initdb')) ? dir : undefined;
}

/** The PostgreSQL server's bin directory, installing Debian's `postgresql` when root and missing. */
export function ensurePostgresInstalled(): string {
  let bin = findPgBinDir();
  if (!bin && isRoot) {
    aptInstall('postgresql');
    bin = findPgBinDir();
  }
  if (!bin) {
    throw new Error(
      "PostgreSQL server not found. Install Debian's package first: sudo apt-get install -y postgresql " +
        '(or set DATABASE_URL to a server you already run).',
    );
  }
  return bin;
}

/** Path of the Chromium binary for the browser suite, installing Debian's `chromium` when root. */
export function ensureChromium(): string {
  const candidates = ['/usr/bin/chromium', '/usr/bin/chromium-browser'];
  let found = candidates.find((c) => existsSync(c));
  if (!found && isRoot) {
    aptInstall('chromium');
    found = candidates.find((c) => existsSync(c));
  }
  if (!found) {
    throw new Error(
      "Chromium not found. Install Debian's package: sudo apt-get install -y chromium",
    );
  }
  return found;
}

/** Runs a PostgreSQL tool as the `postgres` user when we are root (the server refuses root). */
function pgTool(bin: string, tool: string, args: string[]) {
  const command = isRoot ? 'runuser' : path.join(bin, tool);
  const fullArgs = isRoot ? ['-u', 'postgres', '--', path.join(bin, tool), ...args] : args;
  const result = spawnSync(command, fullArgs, { encoding: 'utf8' });
  if (result.status !== 0) {
    const output = `${result.stdout ?? ''}${result.stderr ?? ''}`.trim();
    throw new Error(`${tool} failed (exit ${result.status}): ${output}`);
  }
  return result.stdout;
}

function postgresCanReach(dir: string): boolean {
  if (!isRoot) return true;
  return spawnSync('runuser', ['-u', 'postgres', '--', 'test', '-x', dir]).status === 0;
}

/**
 * Where the private cluster lives. Under the project's data folder when the `postgres` user can
 * reach it; otherwise (a clone under a home folder of mode 700) a per-project folder in the system
 * temp directory, named after a hash of the data folder's path.
 */
export function clusterDir(dataDir: string): string {
  const wanted = path.resolve(dataDir, 'postgres');
  mkdirSync(path.dirname(wanted), { recursive: true });
  if (postgresCanReach(path.dirname(wanted))) return wanted;
  const hash = createHash('sha256').update(wanted).digest('hex').slice(0, 12);
  const fallback = path.join(tmpdir(), `fairsheet-${hash}`, 'postgres');
  log(`the postgres user cannot reach ${path.dirname(wanted)}; keeping the cluster in ${fallback}`);
  return fallback;
}

export interface Cluster {
  dir: string;
  port: number;
  url: (database: string) => string;
  createDatabase: (name: string, template?: string) => void;
  dropDatabase: (name: string) => void;
  stop: () => void;
}

export interface ClusterOptions {
  dir: string;
  port: number;
  /** Only for throwaway test clusters: users' data keeps fsync on. */
  unsafeFast?: boolean;
}

/** Creates (once) and starts a private cluster listening on 127.0.0.1 only. */
export function startCluster({ dir, port, unsafeFast = false }: ClusterOptions): Cluster {
  const bin = ensurePostgresInstalled();
  if (!existsSync(path.join(dir, 'PG_VERSION'))) {
    log(`creating a private PostgreSQL cluster in ${dir}`);
    mkdirSync(dir, { recursive: true });
    if (isRoot) execFileSync('chown', ['postgres:postgres', dir]);
    chmodSync(dir, 0o700);
    pgTool(bin, 'initdb', [
      '-D',
      dir,
      '-U',
      'postgres',
      '--auth=trust',
      '-E',
      'UTF8',
      '--locale=C.UTF-8',
    ]);
    appendFileSync(path.join(dir, 'postgresql.conf'), `\ninclude_if_exists = 'fairsheet.conf'\n`);
  }
  // Unix sockets have a 107-byte path limit; loopback TCP is all we use anyway.
  const socketDir = dir.length < 80 ? dir : '';
  const settings = [
    `listen_addresses = '127.0.0.1'`,
    `port = ${port}`,
    `unix_socket_directories = '${socketDir}'`,
    ...(unsafeFast ? ['fsync = off', 'synchronous_commit = off', 'full_page_writes = off'] : []),
  ];
  // Rewritten at every start so a changed port takes effect; postgresql.conf includes it.
  const conf = path.join(dir, 'fairsheet.conf');
  writeFileSync(conf, `${settings.join('\n')}\n`);
  if (isRoot) execFileSync('chown', ['postgres:postgres', conf]);

  const running =
    spawnSync(isRoot ? 'runuser' : path.join(bin, 'pg_ctl'), [
      ...(isRoot ? ['-u', 'postgres', '--', path.join(bin, 'pg_ctl')] : []),
      '-D',
      dir,
      'status',
    ]).status === 0;
  if (running) pgTool(bin, 'pg_ctl', ['-D', dir, '-m', 'fast', '-w', 'stop']);
  pgTool(bin, 'pg_ctl', ['-D', dir, '-l', path.join(dir, 'server.log'), '-w', '-t', '30', 'start']);

  const psql = (sql: string) =>
    pgTool(bin, 'psql', [
      '-h',
      '127.0.0.1',
      '-p',
      String(port),
      '-U',
      'postgres',
      '-d',
      'postgres',
      '-v',
      'ON_ERROR_STOP=1',
      '-qtAc',
      sql,
    ]);

  return {
    dir,
    port,
    url: (database) => `postgres://postgres@127.0.0.1:${port}/${database}`,
    createDatabase(name, template) {
      const exists = psql(`SELECT 1 FROM pg_database WHERE datname = '${name}'`).trim() === '1';
      if (!exists) psql(`CREATE DATABASE "${name}"${template ? ` TEMPLATE "${template}"` : ''}`);
    },
    dropDatabase(name) {
      psql(`DROP DATABASE IF EXISTS "${name}" WITH (FORCE)`);
    },
    stop() {
      pgTool(bin, 'pg_ctl', ['-D', dir, '-m', 'fast', '-w', 'stop']);
    },
  };
}

/** Removes a stopped throwaway cluster's folder. */
export function removeCluster(dir: string) {
  rmSync(dir, { recursive: true, force: true });
}
