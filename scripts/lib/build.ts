import { execFileSync } from 'node:child_process';
import { existsSync, readdirSync, statSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

export const projectRoot = fileURLToPath(new URL('../..', import.meta.url));

function newestMtime(entry: string): number {
  const full = path.join(projectRoot, entry);
  if (!existsSync(full)) return 0;
  const stat = statSync(full);
  if (!stat.isDirectory()) return stat.mtimeMs;
  let newest = stat.mtimeMs;
  for (const name of readdirSync(full, { recursive: true }) as string[]) {
    newest = Math.max(newest, statSync(path.join(full, name)).mtimeMs);
  }
  return newest;
}

/** Builds the client with Vite when dist/ is missing or older than its sources. */
export function buildClientIfStale(): void {
  const built = path.join(projectRoot, 'dist', 'index.html');
  const sources = ['src', 'shared', 'public', 'index.html', 'vite.config.ts', 'package-lock.json'];
  const stale =
    !existsSync(built) || Math.max(...sources.map(newestMtime)) > statSync(built).mtimeMs;
  if (!stale) return;
  console.log('[fairsheet] building the client (vite build) …');
  execFileSync(
    path.join(projectRoot, 'node_modules', '.bin', 'vite'),
    ['build', '--logLevel', 'warn'],
    {
      cwd: projectRoot,
      stdio: 'inherit',
    },
  );
}
