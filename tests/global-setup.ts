// Before any test: a throwaway PostgreSQL cluster for this run (in the system temp folder, on a
// free loopback port) and a migrated template database each test file copies. After the run the cluster is stopped and removed.
import { chmodSync, mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import type { TestProject } from 'vitest/node';
import { applyMigrations, connect } from '../server/db/client';
import { removeCluster, startCluster } from '../scripts/lib/system';
import { freePort } from './helpers/net';

declare module 'vitest' {
  export interface ProvidedContext {
    pgPort: number;
    templateDb: string;
  }
}

export default async function setup(project: TestProject) {
  const root = mkdtempSync(path.join(tmpdir(), 'fairsheet-test-'));
  // mkdtemp makes the folder private; the postgres user must be able to enter it.
  chmodSync(root, 0o755);
  const cluster = startCluster({
    dir: path.join(root, 'postgres'),
    port: await freePort(),
    unsafeFast: true,
  });
  const templateDb = 'fairsheet_template';
  cluster.createDatabase(templateDb);
  const { db, pool } = connect(cluster.url(templateDb), 1);
  await applyMigrations(db);
  await pool.end();

  project.provide('pgPort', cluster.port);
  project.provide('templateDb', templateDb);

  return () => {
    cluster.stop();
    removeCluster(root);
  };
}
