// `npm test`: lint, type check, then every vitest suite (engine, API on a throwaway PostgreSQL,
// browser on Debian's Chromium). Ends with the plain line "N passed, N failed".
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { projectRoot } from './lib/build';

const bin = (name: string) => path.join(projectRoot, 'node_modules', '.bin', name);

function step(title: string, command: string, args: string[]): boolean {
  console.log(`\n▶ ${title}`);
  const result = spawnSync(command, args, { cwd: projectRoot, stdio: 'inherit' });
  return result.status === 0;
}

const extra = process.argv.slice(2);
let ok = true;
if (!extra.length) {
  ok = step('lint (eslint)', bin('eslint'), ['--max-warnings', '0', '.']) && ok;
  // One check per runtime (see tsconfig.json): the browser, Node.js, code for either, the tests.
  for (const runtime of ['browser', 'node', 'shared', 'tests']) {
    ok =
      step(`type check, ${runtime} (vue-tsc)`, bin('vue-tsc'), [
        '--noEmit',
        '-p',
        `tsconfig.${runtime}.json`,
      ]) && ok;
  }
}

const resultsDir = path.join(projectRoot, 'test-results');
mkdirSync(resultsDir, { recursive: true });
const report = path.join(resultsDir, 'vitest.json');
ok =
  step('tests (vitest: unit, API, browser)', bin('vitest'), [
    'run',
    '--reporter=default',
    '--reporter=json',
    `--outputFile.json=${report}`,
    ...extra,
  ]) && ok;

let passed = 0;
let failed = 0;
if (existsSync(report)) {
  const json = JSON.parse(readFileSync(report, 'utf8')) as {
    numPassedTests: number;
    numFailedTests: number;
  };
  passed = json.numPassedTests;
  failed = json.numFailedTests;
}
if (passed + failed === 0) ok = false;
console.log(`\n${passed} passed, ${failed} failed`);
process.exit(ok ? 0 : 1);
