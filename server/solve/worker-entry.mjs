// The solve thread's entry. Plain JavaScript so Node starts it the same under `npm start`
// (tsx), vitest and plain node; it registers tsx here, with the app's tsconfig.json (whose
// paths make `@shared/...` resolve as in the app), then loads the TypeScript worker.
import { workerData } from 'node:worker_threads';
import { register } from 'tsx/esm/api';

register({ tsconfig: workerData.tsconfig });
await import('./worker.ts');
