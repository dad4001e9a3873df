import { drizzle, type NodePgDatabase } from 'drizzle-orm/node-postgres';
import { migrate } from 'drizzle-orm/node-postgres/migrator';
import { fileURLToPath } from 'node:url';
import pg from 'pg';
import * as core from './schema';
import * as team from './schema-team';

const schema = { ...core, ...team };

export type Db = NodePgDatabase<typeof schema>;

export interface Database {
  db: Db;
  pool: pg.Pool;
}

/** One pool per process; everything that talks to PostgreSQL goes through it. */
export function connect(url: string, max = 10): Database {
  const pool = new pg.Pool({ connectionString: url, max });
  // A client that loses its server (database stopped or restarted) emits 'error'; with no
  // listener that would end the process. pg-pool listens on idle clients only and passes their
  // errors on as the pool's 'error'; a client checked out by a request (a transaction waiting
  // on a lock, say) has no listener of its own, so every client gets one. The request sees
  // the same failure through its query and answers 503; the pool drops the broken client.
  pool.on('error', (err) => console.error('[db] idle client error:', err.message));
  pool.on('connect', (client) => client.on('error', () => {}));
  return { pool, db: drizzle(pool, { schema }) };
}

const migrationsFolder = fileURLToPath(new URL('../../drizzle', import.meta.url));

/** Applies the SQL migrations in drizzle/; throws (and start stops) when one fails. */
export async function applyMigrations(db: Db) {
  await migrate(db, { migrationsFolder });
}
