import { randomBytes } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import type { Server } from 'node:http';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { createApp } from './app';
import { createPasswordHasher } from './auth/passwords';
import { applyMigrations, connect } from './db/client';
import { seedDemo } from './demo/seed';
import type { Env } from './env';
import { createMailer } from './mail/mailer';
import { startMailSink, type MailSink } from './mail/sink';
import { createSheetService } from './services/sheets';
import { storageFromEnv } from './storage';

export interface RunningServer {
  url: string;
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
  // Files left by deleted projects (their sheets went with them; the stored bytes did not).
  const swept = await createSheetService({ db: database.db, storage }).removeUnusedFiles();
  if (swept) console.log(`[fairsheet] removed ${swept} stored files no sheet uses`);
  if (env.FAIRSHEET_SEED_DEMO) {
    const seeded = await seedDemo(database.db, hasher, storage);
    if (seeded) console.log(`[fairsheet] demo data created`);
  }

  const app = createApp({
    database,
    mailer: createMailer({ smtpUrl: env.SMTP_URL, sinkPort: sink?.port ?? 0, from: env.MAIL_FROM }),
    storage,
    uploadMaxBytes: Math.round(env.UPLOAD_MAX_MB * 1024 * 1024),
    hasher,
    sessionSecret: sessionSecret(env),
    appUrl,
    production,
    mailDir: sink ? mailDir : undefined,
    clientDir: fileURLToPath(new URL('../dist', import.meta.url)),
    trustProxy: env.TRUST_PROXY,
    logLevel: env.LOG_LEVEL,
    solvesPerMinute: env.SOLVE_RATE_LIMIT,
  });

  const server: Server = await new Promise((resolve, reject) => {
    const s = app.listen(env.PORT, env.HOST, () => resolve(s));
    s.once('error', reject);
  });

  return {
    url: appUrl,
    async close() {
      await new Promise<void>((resolve) => server.close(() => resolve()));
      await sink?.close();
      await database.pool.end();
    },
  };
}
