// `npm start`: PostgreSQL (a private cluster unless DATABASE_URL is set), the client build,
// then the app on http://127.0.0.1:3000 with the demo data. Ctrl-C stops it all cleanly.
import path from 'node:path';
import { loadEnv } from '../server/env';
import { startServer, stopOnSignals } from '../server/index';
import { demoBuilder, demoChecker, demoPassword } from '../server/demo/seed';
import { buildClientIfStale } from './lib/build';
import { clusterDir, startCluster, type Cluster } from './lib/system';

async function main() {
  const env = loadEnv();
  let cluster: Cluster | undefined;
  let databaseUrl = env.DATABASE_URL;
  if (!databaseUrl) {
    cluster = startCluster({
      dir: clusterDir(env.FAIRSHEET_DATA_DIR),
      port: env.FAIRSHEET_PG_PORT,
    });
    cluster.createDatabase('fairsheet');
    databaseUrl = cluster.url('fairsheet');
    console.log(`[fairsheet] PostgreSQL on 127.0.0.1:${cluster.port} (data in ${cluster.dir})`);
  }
  buildClientIfStale();

  let server: Awaited<ReturnType<typeof startServer>>;
  try {
    server = await startServer(env, databaseUrl);
  } catch (err) {
    cluster?.stop();
    throw err;
  }

  console.log(`\nFairsheet is running at ${server.url}`);
  if (env.FAIRSHEET_SEED_DEMO) {
    console.log(`  sign in as ${demoBuilder.email} (builder) or ${demoChecker.email} (checker),`);
    console.log(`  password: ${demoPassword}`);
  }
  if (!env.SMTP_URL && env.NODE_ENV !== 'production') {
    console.log(
      `  mail goes to the local sink: ${server.url}/dev/mail (files in ${path.resolve(env.FAIRSHEET_DATA_DIR, 'mail')})`,
    );
  }
  console.log('  Ctrl-C stops the app and its database.\n');

  stopOnSignals(server, () => {
    if (!cluster) return;
    cluster.stop();
    console.log('[fairsheet] database stopped');
  });
}

main().catch((err: Error) => {
  console.error(`[fairsheet] could not start: ${err.message}`);
  process.exit(1);
});
