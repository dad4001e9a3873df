import type { ErrorRequestHandler } from 'express';
import type { ErrorCode } from '@shared/api';
import { EngineError } from '@shared/engine/errors';

/** The one error family: a code, a message for people, an HTTP status and optional details. */
export class AppError extends Error {
  constructor(
    readonly code: ErrorCode,
    message: string,
    readonly status: number,
    readonly details?: unknown,
    readonly headers: Record<string, string> = {},
  ) {
    super(message);
    this.name = 'AppError';
  }
}

export const badRequest = (message: string, details?: unknown) =>
  new AppError('bad_request', message, 400, details);
export const unauthenticated = () => new AppError('unauthenticated', 'Sign in first.', 401);
export const forbidden = (message = 'Your role on this project does not allow that.') =>
  new AppError('forbidden', message, 403);
export const notFound = (what = 'That') => new AppError('not_found', `${what} was not found.`, 404);
export const conflict = (message: string, details?: unknown) =>
  new AppError('conflict', message, 409, details);
export const unprocessable = (message: string, details?: unknown) =>
  new AppError('unprocessable', message, 422, details);
export const payloadTooLarge = (message: string, details?: unknown) =>
  new AppError('payload_too_large', message, 413, details);

// How node-postgres (pg 8.23, pg-pool 3) reports a database it cannot reach or that went away:
// socket errors, SQLSTATEs of the server stopping or refusing connections, and plain Errors
// whose message is all there is.
const unavailableCodes = new Set([
  'ECONNREFUSED', // nothing listens: the server is down
  'ECONNRESET',
  'EPIPE',
  'ETIMEDOUT',
  'EHOSTUNREACH',
  'ENETUNREACH',
  'EAI_AGAIN',
  '57P01', // admin_shutdown: the server is stopping (pg_ctl stop -m fast) or ended our backend
  '57P02', // crash_shutdown
  '57P03', // cannot_connect_now: the server is starting up or shutting down
  '53300', // too_many_connections
]);
const unavailableMessages = [
  'Connection terminated', // the socket closed under a query ("… unexpectedly" included)
  'Client has encountered a connection error and is not queryable',
  'timeout exceeded when trying to connect',
  'Cannot use a pool after calling end on the pool', // a request outliving a shutdown's grace
];

/**
 * True when an error (or its cause: Drizzle wraps driver errors; or one of an AggregateError's
 * errors: a host name resolving to several addresses) means the database cannot be reached.
 */
export function isDatabaseUnavailable(err: unknown, depth = 0): boolean {
  if (!err || typeof err !== 'object' || depth > 4 || isStorageServiceError(err)) return false;
  const { code, message, cause, errors } = err as {
    code?: unknown;
    message?: unknown;
    cause?: unknown;
    errors?: unknown;
  };
  if (typeof code === 'string' && (unavailableCodes.has(code) || code.startsWith('08')))
    return true; // SQLSTATE class 08: connection exception
  if (typeof message === 'string' && unavailableMessages.some((m) => message.startsWith(m)))
    return true;
  if (Array.isArray(errors) && errors.some((e) => isDatabaseUnavailable(e, depth + 1))) return true;
  return isDatabaseUnavailable(cause, depth + 1);
}

/** The S3 client's errors carry `$metadata` (attempts, HTTP status), whatever went wrong. */
function isStorageServiceError(err: object): boolean {
  return '$metadata' in err;
}

/** The bucket could not be reached, or answered that it cannot serve now (5xx, throttling). */
export function isStorageUnavailable(err: unknown): boolean {
  if (!err || typeof err !== 'object' || !isStorageServiceError(err)) return false;
  const { code, $metadata } = err as { code?: unknown; $metadata?: { httpStatusCode?: number } };
  const status = $metadata?.httpStatusCode;
  return (
    (typeof code === 'string' && unavailableCodes.has(code)) ||
    status === undefined ||
    status === 429 ||
    status >= 500
  );
}

const requestErrorCodes: Partial<Record<number, ErrorCode>> = {
  404: 'not_found',
  415: 'unsupported_media_type',
};

/**
 * After the routes: answers `{ error: { code, message, details } }`. A database that cannot be
 * reached answers 503; unknown errors are logged and answer a plain 500 (never a stack trace).
 */
export function errorHandler(options: { production: boolean }): ErrorRequestHandler {
  return (err, _req, res, _next) => {
    if (res.headersSent) {
      // Too late to answer: a session store write after the answer (express-session saves and
      // touches the session as the response ends), or a stream that failed half way. A finished
      // answer stands; an unfinished one is cut so the client cannot take it for whole.
      // (A database gone away is reported by the requests that meet it, not once per answer.)
      if (!isDatabaseUnavailable(err))
        console.error('[server] error after the answer:', options.production ? err?.message : err);
      if (!res.writableEnded) res.destroy();
      return;
    }
    if (err instanceof AppError) {
      res
        .set(err.headers)
        .status(err.status)
        .json({
          error: { code: err.code, message: err.message, details: err.details },
        });
      return;
    }
    // Any engine refusal a route did not map itself (a quantity, relation, calibration, thread,
    // drill or shop figure that cannot be read) is the request's fault: 400 with the engine's
    // code and where the fault is.
    if (err instanceof EngineError) {
      res.status(400).json({
        error: {
          code: 'bad_request',
          message: err.message,
          details: { engineCode: err.code, ...err.location },
        },
      });
      return;
    }
    // body-parser and friends set `status`/`type` on their errors.
    const status = typeof err?.status === 'number' ? err.status : 500;
    if (err?.type === 'entity.too.large' || status === 413) {
      res
        .status(413)
        .json({ error: { code: 'payload_too_large', message: 'The request body is too large.' } });
      return;
    }
    if (err?.type === 'entity.parse.failed') {
      res
        .status(400)
        .json({ error: { code: 'bad_request', message: 'The request body is not valid JSON.' } });
      return;
    }
    // Other refusals of the request itself, by the middleware that read it: a body cut short
    // ("request aborted"), a charset it cannot read, a bad %-escape in the path. Their message
    // is shown only when marked as meant for the client (http-errors' `expose`).
    if (status >= 400 && status < 500) {
      res.status(status).json({
        error: {
          code: requestErrorCodes[status] ?? 'bad_request',
          message:
            err?.expose === true
              ? `The request was not understood: ${String(err.message)}.`
              : 'The request was not understood.',
        },
      });
      return;
    }
    if (isDatabaseUnavailable(err)) {
      res
        .status(503)
        .set('Retry-After', '5')
        .json({
          error: {
            code: 'unavailable',
            message: 'The database is not answering. Try again in a moment.',
          },
        });
      return;
    }
    if (isStorageUnavailable(err)) {
      console.error('[server] file storage not answering:', err?.message);
      res
        .status(503)
        .set('Retry-After', '5')
        .json({
          error: {
            code: 'unavailable',
            message: 'The file storage is not answering. Try again in a moment.',
          },
        });
      return;
    }
    console.error('[server] unexpected error:', options.production ? err?.message : err);
    res
      .status(500)
      .json({ error: { code: 'internal', message: 'Something went wrong on the server.' } });
  };
}
