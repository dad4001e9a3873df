// The app alone in its own process, as `npm start` serves it (server/index.ts, the same stop on
// SIGTERM and SIGINT) but on DATABASE_URL and without the client build: what the system tests
// start, kill, restart and stop.
import { loadEnv } from '../../server/env';
import { startServer, stopOnSignals } from '../../server/index';

const env = loadEnv();
if (!env.DATABASE_URL) throw new Error('DATABASE_URL is required');
const server = await startServer(env, env.DATABASE_URL);
stopOnSignals(server);
console.log(`[fairsheet] listening at ${server.url}`);
