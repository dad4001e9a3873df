import { createHash } from 'node:crypto';
import { availableParallelism } from 'node:os';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import type { FeaturesResult, SolveOptions, SolveResult } from '@shared/engine';
import { AppError, unprocessable } from '../http/errors';
import type { ServerSolveOptions, SolveJob, SolveReply } from './jobs';

export interface SolvePoolOptions {
  /** Solve threads (default: the machine's cores, at least 1). */
  size?: number;
  /** Wall-clock limit of one job, from the moment a thread takes it, ms (default 10 000). */
  timeLimitMs?: number;
  /** Jobs that may wait for a thread; more are refused with 503 (default 16 a thread). */
  maxWaiting?: number;
  /** Heap of each thread, MB (default 512). */
  memoryLimitMb?: number;
  /** Bound of the answer cache, in characters of JSON (default 64 million). */
  cacheChars?: number;
  /** Largest answer of one job, in characters of JSON (default 64 million). */
  maxAnswerChars?: number;
  /** Told when a thread takes a job and when the job ends (answered, refused or cut off). */
  onJob?: (event: 'start' | 'end', kind: SolveJob['kind']) => void;
  /** The thread's script (default worker-entry.mjs); tests give one that never answers. */
  entry?: URL;
}

/**
 * Every server solve: one pool of threads, each job under one wall-clock limit, answers cached
 * by the fingerprint of what was asked.
 */
export interface SolvePool {
  /** The result of `solveModel` as JSON text, ready to send. */
  solveJson(model: unknown, options?: ServerSolveOptions): Promise<string>;
  /** The result of `solveModel`. */
  solve(model: unknown, options?: ServerSolveOptions): Promise<SolveResult>;
  /** The result of `evaluateFeatures` (the shop sheet's positions, drills and speeds). */
  features(model: unknown): Promise<FeaturesResult>;
  /** A revision's solve and features, for a save to store (each cached as its own job). */
  revision(model: unknown): Promise<{ result: SolveResult; features: FeaturesResult }>;
  /** Jobs handed to a thread so far (answers from the cache are not jobs). */
  readonly jobs: number;
  /** Starts every thread; resolves once all are ready to take a job. */
  warm(): Promise<void>;
  readonly timeLimitMs: number;
  /** Ends every thread; jobs waiting or running are refused with 503. */
  close(): Promise<void>;
}

/** The engine's own Newton budget (its default): a server solve answers what the browser does. */
const newtonTimeLimitMs = 2000;

type JobSpec = Omit<SolveJob, 'id'>;

interface Waiting {
  spec: JobSpec;
  resolve: (json: string) => void;
  reject: (err: Error) => void;
}

interface Thread {
  worker: Worker;
  ready: boolean;
  started: Promise<void>;
  /** Ended by the pool (time limit, close): its exit is expected. */
  retired: boolean;
  running?: Waiting & { id: number; timer: NodeJS.Timeout };
}

const megabytes = (chars: number) => `${Number((chars / 1e6).toPrecision(2))} MB`;

const entry = new URL('./worker-entry.mjs', import.meta.url);
const tsconfig = fileURLToPath(new URL('../../tsconfig.json', import.meta.url));

/**
 * JSON with every object's keys in one order: PostgreSQL's jsonb keeps its own key order, so the
 * stored revision and the body that saved it fingerprint alike only when both are sorted.
 */
function canonicalJson(value: unknown): string {
  return JSON.stringify(value, (_key, v: unknown) =>
    v && typeof v === 'object' && !Array.isArray(v)
      ? Object.fromEntries(Object.entries(v).sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0)))
      : v,
  );
}

/** What a job is asked, as a hash: the same model and options give the same answer. */
function fingerprint(spec: JobSpec): string {
  return createHash('sha256')
    .update(canonicalJson([spec.kind, spec.options, spec.model]))
    .digest('hex');
}

/** The answers of recent jobs, the least recently used dropped first beyond `maxChars`. */
function answerCache(maxChars: number) {
  const entries = new Map<string, string>();
  let chars = 0;
  return {
    get(key: string) {
      const json = entries.get(key);
      if (json !== undefined) {
        entries.delete(key);
        entries.set(key, json);
      }
      return json;
    },
    set(key: string, json: string) {
      // One answer may not take more than an eighth of the cache from all the others.
      if (json.length > maxChars / 8 || entries.has(key)) return;
      entries.set(key, json);
      chars += json.length;
      for (const [k, v] of entries) {
        if (chars <= maxChars) break;
        entries.delete(k);
        chars -= v.length;
      }
    },
  };
}

/**
 * Starts threads on first use, up to `size`; a thread that passes the time limit (or runs out of
 * memory) is ended, its job refused with 422 naming the limit, and a new thread takes its place.
 */
export function createSolvePool(options: SolvePoolOptions = {}): SolvePool {
  const size = Math.max(1, options.size ?? availableParallelism());
  const timeLimitMs = options.timeLimitMs ?? 10_000;
  const maxWaiting = options.maxWaiting ?? 16 * size;
  const memoryLimitMb = options.memoryLimitMb ?? 512;
  const maxAnswerChars = options.maxAnswerChars ?? 64_000_000;
  const engineOptions: SolveOptions = { timeLimitMs: Math.min(newtonTimeLimitMs, timeLimitMs) };
  const cache = answerCache(options.cacheChars ?? 64_000_000);
  const inFlight = new Map<string, Promise<string>>();
  const threads: Thread[] = [];
  const waiting: Waiting[] = [];
  let nextId = 1;
  let jobs = 0;
  let closed = false;

  const seconds = `${Number((timeLimitMs / 1000).toFixed(1))} s`;
  const overTime = () =>
    unprocessable(
      `The model was not solved within the ${seconds} a solve may take. Fewer dimensions or relations, or fewer Monte Carlo samples, will solve sooner.`,
      { limit: 'solve-time', limitMs: timeLimitMs },
    );
  const overMemory = () =>
    unprocessable(
      `The model needs more than the ${memoryLimitMb} MB of memory a solve may use. Fewer dimensions or relations, or fewer Monte Carlo samples, need less.`,
      { limit: 'solve-memory', limitMb: memoryLimitMb },
    );
  const tooLarge = (chars: number) =>
    unprocessable(
      `The result of this model would be ${megabytes(chars)}; a solve may answer at most ${megabytes(maxAnswerChars)}. Long chains of derived values make the largest results: fewer links, or fewer values derived from each other, make it smaller.`,
      { limit: 'solve-answer', limitBytes: maxAnswerChars },
    );
  const stopping = () =>
    new AppError('unavailable', 'The server is stopping. Try again in a moment.', 503, undefined, {
      'Retry-After': '5',
    });

  function start(): Thread {
    const worker = new Worker(options.entry ?? entry, {
      // The entry registers tsx itself: flags inherited from `tsx` or vitest would register twice.
      execArgv: [],
      workerData: { tsconfig, maxAnswerChars },
      resourceLimits: { maxOldGenerationSizeMb: memoryLimitMb },
    });
    let started!: { resolve: () => void; reject: (err: Error) => void };
    const thread: Thread = {
      worker,
      ready: false,
      retired: false,
      started: new Promise((resolve, reject) => (started = { resolve, reject })),
    };
    thread.started.catch(() => {}); // told to the jobs waiting, below
    worker.unref(); // an idle thread never keeps the process alive
    worker.on('message', (reply: SolveReply) => {
      if (reply.id === undefined) {
        thread.ready = true;
        started.resolve();
        pump();
        return;
      }
      const job = thread.running;
      if (!job || job.id !== reply.id) return;
      end(thread);
      if (reply.json !== undefined) job.resolve(reply.json);
      else if (reply.chars !== undefined) job.reject(tooLarge(reply.chars));
      else job.reject(unprocessable(`The solver could not finish this model: ${reply.failure}`));
      pump();
    });
    worker.on('error', (err: Error & { code?: string }) => {
      if (thread.retired) return;
      started.reject(err);
      const job = thread.running;
      if (job) {
        end(thread);
        job.reject(err.code === 'ERR_WORKER_OUT_OF_MEMORY' ? overMemory() : err);
      }
      // A thread that never started cannot be replaced with a better one: say so to the jobs
      // waiting (a plain Error: logged, a 500) rather than start threads in a loop.
      if (!thread.ready) for (const w of waiting.splice(0)) w.reject(err);
      retire(thread, Boolean(job));
    });
    worker.on('exit', () => {
      if (thread.retired) return;
      const job = thread.running;
      const early = new Error('A solve thread ended before it started.');
      started.reject(early);
      if (!thread.ready) for (const w of waiting.splice(0)) w.reject(early);
      if (job) {
        end(thread);
        job.reject(new Error('A solve thread ended unexpectedly.'));
      }
      retire(thread, Boolean(job));
    });
    threads.push(thread);
    return thread;
  }

  /** A thread's job is over: its timer stops and an idle thread no longer holds the process. */
  function end(thread: Thread) {
    const job = thread.running;
    if (!job) return;
    clearTimeout(job.timer);
    thread.running = undefined;
    thread.worker.unref();
    options.onJob?.('end', job.spec.kind);
  }

  /** Ends a thread; `replace`: starts another in its place (so the next job finds one warm). */
  function retire(thread: Thread, replace: boolean) {
    thread.retired = true;
    const at = threads.indexOf(thread);
    if (at >= 0) threads.splice(at, 1);
    void thread.worker.terminate();
    if (replace && !closed) start();
    pump();
  }

  function pump() {
    if (closed) return;
    for (const thread of threads) {
      if (!waiting.length) break;
      if (!thread.ready || thread.running || thread.retired) continue;
      const job = waiting.shift()!;
      const id = nextId++;
      jobs++;
      const timer = setTimeout(() => {
        if (thread.running?.id !== id) return;
        end(thread);
        job.reject(overTime());
        retire(thread, true);
      }, timeLimitMs);
      thread.running = { ...job, id, timer };
      thread.worker.ref(); // a job in progress keeps the process alive until it is answered
      thread.worker.postMessage({ ...job.spec, id } satisfies SolveJob);
      options.onJob?.('start', job.spec.kind);
    }
    // A thread takes a second or so to start: once there is work, the whole pool is started, so
    // the next job finds a thread ready while this one runs.
    if (waiting.length) while (threads.length < size) start();
  }

  function run(spec: JobSpec): Promise<string> {
    if (closed) return Promise.reject(stopping());
    const key = fingerprint(spec);
    const cached = cache.get(key);
    if (cached !== undefined) return Promise.resolve(cached);
    const shared = inFlight.get(key);
    if (shared) return shared;
    if (waiting.length >= maxWaiting) {
      return Promise.reject(
        new AppError(
          'unavailable',
          'The solver is busy with other models. Try again in a moment.',
          503,
          undefined,
          { 'Retry-After': '5' },
        ),
      );
    }
    const answer = new Promise<string>((resolve, reject) => {
      waiting.push({ spec, resolve, reject });
      pump();
    });
    inFlight.set(key, answer);
    answer.then(
      (json) => {
        inFlight.delete(key);
        cache.set(key, json);
      },
      () => inFlight.delete(key),
    );
    return answer;
  }

  const solveSpec = (model: unknown, o: ServerSolveOptions = {}): JobSpec => ({
    kind: 'solve',
    model,
    options: o.monteCarlo ? { ...engineOptions, monteCarlo: o.monteCarlo } : engineOptions,
  });

  return {
    solveJson: (model, o) => run(solveSpec(model, o)),
    async solve(model, o) {
      return JSON.parse(await run(solveSpec(model, o))) as SolveResult;
    },
    async features(model) {
      return JSON.parse(
        await run({ kind: 'features', model, options: engineOptions }),
      ) as FeaturesResult;
    },
    async revision(model) {
      // Two jobs, each cached as it is: the threads take them side by side.
      const [result, features] = await Promise.all([
        run(solveSpec(model)),
        run({ kind: 'features', model, options: engineOptions }),
      ]);
      return {
        result: JSON.parse(result) as SolveResult,
        features: JSON.parse(features) as FeaturesResult,
      };
    },
    get jobs() {
      return jobs;
    },
    async warm() {
      if (closed) throw stopping();
      while (threads.length < size) start();
      await Promise.all(threads.map((t) => t.started));
    },
    timeLimitMs,
    async close() {
      closed = true;
      for (const w of waiting.splice(0)) w.reject(stopping());
      const ending = threads.splice(0).map((thread) => {
        thread.retired = true;
        const job = thread.running;
        end(thread);
        job?.reject(stopping());
        return thread.worker.terminate();
      });
      await Promise.all(ending);
    },
  };
}

let processPool: SolvePool | undefined;

/**
 * The process's own pool at the defaults (threads start on first use), for an app or a seed
 * built without one: several apps in one process share the cores, so they share the pool.
 */
export function defaultSolvePool(): SolvePool {
  processPool ??= createSolvePool();
  return processPool;
}
