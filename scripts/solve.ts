/**
 * Solve a model file from the command line and print the result JSON.
 *
 *   npm run -s solve -- model.json [--monte-carlo N --seed S]
 *
 * Exit status: 0 solved, 1 contradictory or incomplete, 2 invalid (the result JSON with its
 * errors is still printed) or a file that is missing or not JSON (message on stderr).
 */
import { readFileSync } from 'node:fs';
import { solveModel, type SolveOptions } from '@shared/engine';

function usage(message: string): never {
  process.stderr.write(
    `${message}\nusage: npm run -s solve -- FILE.json [--monte-carlo N --seed S]\n`,
  );
  process.exit(2);
}

const args = process.argv.slice(2);
let file: string | undefined;
const options: SolveOptions = {};
let samples: number | undefined;
let seed: number | undefined;
for (let i = 0; i < args.length; i++) {
  const a = args[i]!;
  if (a === '--monte-carlo' || a === '--seed') {
    const v = Number(args[++i]);
    if (!Number.isInteger(v) || v < (a === '--seed' ? 0 : 1)) usage(`${a} needs a whole number`);
    if (a === '--seed') seed = v;
    else samples = v;
  } else if (a.startsWith('--')) usage(`unknown option ${a}`);
  else if (file === undefined) file = a;
  else usage(`unexpected argument ${a}`);
}
if (!file) usage('no model file given');
if (samples !== undefined) options.monteCarlo = { samples, seed: seed ?? 1 };

let text: string;
try {
  text = readFileSync(file, 'utf8');
} catch (e) {
  usage(`cannot read ${file}: ${(e as Error).message}`);
}
let json: unknown;
try {
  json = JSON.parse(text);
} catch (e) {
  usage(`${file} is not JSON: ${(e as Error).message}`);
}

const result = solveModel(json, options);
process.stdout.write(`${JSON.stringify(result, null, 2)}\n`);
process.exitCode = result.status === 'solved' ? 0 : result.status === 'invalid' ? 2 : 1;
