// `npm run db:migrate`: applies drizzle/ to DATABASE_URL or the private cluster; exits non-zero on failure.
import { loadEnv } from '../server/env';
import { applyMigrations, connect } from '../server/db/client';
import { clusterDir, startCluster } from './lib/system';

const env = loadEnv();
let url = env.DATABASE_URL;
if (!url) {
  const cluster = startCluster({
    dir: clusterDir(env.FAIRSHEET_DATA_DIR),
    port: env.FAIRSHEET_PG_PORT,
  });
  cluster.createDatabase('fairsheet');
  url = cluster.url('fairsheet');
}
const { db, pool } = connect(url, 1);
try {
  await applyMigrations(db);
  console.log('migrations applied');
} catch (err) {
  console.error(`migration failed: ${(err as Error).message}`);
  process.exitCode = 1;
} finally {
  await pool.end();
}
