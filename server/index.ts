import { randomBytes } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { createApp } from './app';
import { createPasswordHasher } from './auth/passwords';
import { applyMigrations, connect } from './db/client';
import { seedDemo } from './demo/seed';
import type { Env } from './env';
import { createGracefulServer } from './http/graceful';
import { createMailer } from './mail/mailer';
import { startMailSink, type MailSink } from './mail/sink';
import { createSheetService } from './services/sheets';
import { createSolvePool } from './solve/pool';
import { storageFromEnv } from './storage';

export interface RunningServer {
  url: string;
  /**
   * Stops taking connections, lets the requests in flight finish (at most
   * SHUTDOWN_GRACE_SECONDS), then ends the solve threads and closes the mail sink and the
   * database pool: no request ever finds the pool closed.
   */
  close(): Promise<void>;
}

/** Outside production a random secret is kept in the data folder, so sessions survive restarts. */
function sessionSecret(env: Env): string {
  if (env.SESSION_SECRET) return env.SESSION_SECRET;
  const file = path.resolve(env.FAIRSHEET_DATA_DIR, 'session-secret');
  if (!existsSync(file)) {
    mkdirSync(path.dirname(file), { recursive: true });
    writeFileSync(file, randomBytes(32).toString('hex'), { mode: 0o600 });
  }
  return readFileSync(file, 'utf8').trim();
}

/**
 * The one place that listens: migrates, seeds the demo once, starts the local mail sink
 * (unless SMTP_URL is set) and serves the API and the built client from one process.
 */
export async function startServer(env: Env, databaseUrl: string): Promise<RunningServer> {
  const production = env.NODE_ENV === 'production';
  const database = connect(databaseUrl);
  await applyMigrations(database.db);

  const mailDir = path.resolve(env.FAIRSHEET_DATA_DIR, 'mail');
  let sink: MailSink | undefined;
  if (!env.SMTP_URL) sink = await startMailSink({ port: env.FAIRSHEET_SMTP_PORT, dir: mailDir });

  const hasher = createPasswordHasher(env.BCRYPT_COST);
  const appUrl = env.APP_URL ?? `http://${env.HOST}:${env.PORT}`;
  const storage = storageFromEnv(env);
  const solver = createSolvePool({
    size: env.SOLVE_THREADS,
    timeLimitMs: env.SOLVE_TIME_LIMIT_SECONDS * 1000,
  });
  // Files left by deleted projects (their sheets went with them; the stored bytes did not).
  const swept = await createSheetService({ db: database.db, storage }).removeUnusedFiles();
  if (swept) console.log(`[fairsheet] removed ${swept} stored files no sheet uses`);
  if (env.FAIRSHEET_SEED_DEMO) {
    const seeded = await seedDemo(database.db, hasher, storage, solver);
    if (seeded) console.log(`[fairsheet] demo data created`);
  }

  const app = createApp({
    database,
    mailer: createMailer({ smtpUrl: env.SMTP_URL, sinkPort: sink?.port ?? 0, from: env.MAIL_FROM }),
    storage,
    uploadMaxBytes: Math.round(env.UPLOAD_MAX_MB * 1024 * 1024),
    uploadTempDir: env.UPLOAD_TEMP_DIR,
    hasher,
    sessionSecret: sessionSecret(env),
    appUrl,
    production,
    mailDir: sink ? mailDir : undefined,
    clientDir: fileURLToPath(new URL('../dist', import.meta.url)),
    trustProxy: env.TRUST_PROXY,
    logLevel: env.LOG_LEVEL,
    solvesPerMinute: env.SOLVE_RATE_LIMIT,
    solver,
  });

  const server = createGracefulServer(app);
  await server.listen(env.PORT, env.HOST);
  // A thread takes a second or so to start: started now, the first solve does not wait for it.
  solver
    .warm()
    .catch((err: Error) =>
      console.error(`[fairsheet] solve threads did not start: ${err.message}`),
    );

  return {
    url: appUrl,
    async close() {
      const { cut } = await server.shutdown(env.SHUTDOWN_GRACE_SECONDS * 1000);
      if (cut) {
        console.warn(
          `[fairsheet] ${cut} requests still running after ${env.SHUTDOWN_GRACE_SECONDS} s were cut off`,
        );
      }
      await solver.close();
      await sink?.close();
      // pool.end() waits for every client in use; a request cut off while it waits on a lock
      // would otherwise hold the process up for good.
      await Promise.race([
        database.pool.end(),
        new Promise<void>((resolve) => setTimeout(resolve, 5000).unref()),
      ]);
    },
  };
}

/**
 * SIGTERM and SIGINT (Ctrl-C) stop the server gracefully, then run `after` (stopping the private
 * cluster), then end the process: 0 when everything closed cleanly. A second signal does not
 * wait: it runs `after` and exits 1.
 */
export function stopOnSignals(server: RunningServer, after?: () => void) {
  let stopping = false;
  const stop = async (signal: string) => {
    if (stopping) {
      console.log(`\n[fairsheet] ${signal} again: stopping at once`);
      after?.();
      process.exit(1);
    }
    stopping = true;
    console.log(`\n[fairsheet] ${signal}: stopping …`);
    let code = 0;
    const failed = (err: unknown) => {
      console.error(`[fairsheet] while stopping: ${(err as Error).message}`);
      code = 1;
    };
    await server.close().catch(failed);
    try {
      after?.();
    } catch (err) {
      failed(err);
    }
    process.exit(code);
  };
  process.on('SIGINT', () => void stop('SIGINT'));
  process.on('SIGTERM', () => void stop('SIGTERM'));
}
