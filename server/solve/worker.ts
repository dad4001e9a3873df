// One solve thread: takes a job from the pool, answers its result as JSON text (made here, so
// the main thread neither builds nor walks a large result), or the engine's failure as a message.
import { parentPort, workerData } from 'node:worker_threads';
import { evaluateFeatures, solveModel } from '@shared/engine';
import type { SolveJob, SolveReply } from './jobs';

if (!parentPort) throw new Error('server/solve/worker.ts runs as a worker thread only');
const port = parentPort;
const { maxAnswerChars } = workerData as { maxAnswerChars: number };

function run(job: SolveJob): string {
  switch (job.kind) {
    case 'solve':
      return JSON.stringify(solveModel(job.model, job.options));
    case 'features':
      return JSON.stringify(evaluateFeatures(job.model, job.options));
  }
}

port.on('message', (job: SolveJob) => {
  let reply: SolveReply;
  try {
    const json = run(job);
    // A long chain's traces grow with its square: the thread refuses an answer the main thread
    // could not copy, parse and send without stalling every other request.
    reply =
      json.length > maxAnswerChars
        ? { id: job.id, failure: 'too-large', chars: json.length }
        : { id: job.id, json };
  } catch (err) {
    // A stack overflow or any other throw in the engine is this job's failure, not the thread's.
    reply = { id: job.id, failure: err instanceof Error ? err.message : String(err) };
  }
  port.postMessage(reply);
});
port.postMessage({ ready: true } satisfies SolveReply);
