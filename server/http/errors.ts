import type { ErrorRequestHandler } from 'express';
import type { ErrorCode } from '@shared/api';

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

function isDatabaseDown(err: unknown): boolean {
  const code =
    (err as { code?: string; cause?: { code?: string } })?.cause?.code ??
    (err as { code?: string })?.code;
  return ['ECONNREFUSED', 'ECONNRESET', '57P01', '57P03', 'ETIMEDOUT'].includes(code ?? '');
}

/** After the routes: answers `{ error: { code, message, details } }`; unknown errors log and 500. */
export function errorHandler(options: { production: boolean }): ErrorRequestHandler {
  return (err, _req, res, _next) => {
    if (err instanceof AppError) {
      res
        .set(err.headers)
        .status(err.status)
        .json({
          error: { code: err.code, message: err.message, details: err.details },
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
    if (isDatabaseDown(err)) {
      res.status(503).json({
        error: {
          code: 'unavailable',
          message: 'The database is not answering. Try again in a moment.',
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
