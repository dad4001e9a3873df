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
  // An idle client that loses its server (database restart) must not crash the process.
  pool.on('error', (err) => console.error('[db] idle client error:', err.message));
  return { pool, db: drizzle(pool, { schema }) };
}

const migrationsFolder = fileURLToPath(new URL('../../drizzle', import.meta.url));

/** Applies the SQL migrations in drizzle/; throws (and start stops) when one fails. */
export async function applyMigrations(db: Db) {
  await migrate(db, { migrationsFolder });
}
