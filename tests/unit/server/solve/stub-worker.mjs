// A stand-in solve thread for the pool's tests: echoes a job's model as its answer, never answers
// a model marked `hang`, and fills its heap for a model marked `grow`.
import { parentPort } from 'node:worker_threads';

parentPort.on('message', (job) => {
  if (job.model?.hang) for (;;);
  if (job.model?.grow) {
    const kept = [];
    for (;;) kept.push(new Array(1e5).fill(kept.length));
  }
  parentPort.postMessage({ id: job.id, json: JSON.stringify({ echo: job.model }) });
});
parentPort.postMessage({ ready: true });
