import { randomBytes, timingSafeEqual } from 'node:crypto';
import connectPgSimple from 'connect-pg-simple';
import type { RequestHandler } from 'express';
import session from 'express-session';
import type pg from 'pg';
import { AppError, unauthenticated } from '../http/errors';

declare module 'express-session' {
  interface SessionData {
    userId?: string;
    csrfToken?: string;
  }
}

export const sessionCookieName = 'fairsheet.sid';

const sessionMaxAgeMs = 30 * 24 * 3600 * 1000;
/** How often an unchanged session's expiry is pushed forward in the database. */
const touchEveryMs = 3600 * 1000;

/**
 * Sessions in PostgreSQL (the `session` table of the Drizzle schema), so they survive restarts
 * and are shared by every instance. The expiry slides with use, but an unchanged session is
 * written at most once an hour per instance instead of on every request (express-session holds
 * the answer until the store's touch commits). The memory of recent touches is a cache: another
 * instance, or this one after a restart, simply touches again.
 */
export function sessionMiddleware(options: {
  pool: pg.Pool;
  secret: string;
  secure: boolean;
}): RequestHandler {
  const PgStore = connectPgSimple(session);
  const store = new PgStore({
    pool: options.pool,
    tableName: 'session',
    createTableIfMissing: false,
  });
  const touchedAt = new Map<string, number>();
  const touch = store.touch.bind(store);
  store.touch = (sid, sess, callback) => {
    const now = Date.now();
    if (now - (touchedAt.get(sid) ?? 0) < touchEveryMs) return callback?.();
    if (touchedAt.size >= 100_000) touchedAt.clear();
    touchedAt.set(sid, now);
    touch(sid, sess, callback);
  };
  return session({
    name: sessionCookieName,
    secret: options.secret,
    store,
    resave: false,
    saveUninitialized: false,
    rolling: true,
    cookie: {
      httpOnly: true,
      sameSite: 'lax',
      secure: options.secure,
      maxAge: sessionMaxAgeMs,
    },
  });
}

export function newCsrfToken(): string {
  return randomBytes(24).toString('base64url');
}

const safeMethods = new Set(['GET', 'HEAD', 'OPTIONS']);

/** Refuses state-changing requests whose X-CSRF-Token header does not match the session's. */
export const requireCsrf: RequestHandler = (req, _res, next) => {
  if (safeMethods.has(req.method)) return next();
  const sent = req.get('x-csrf-token') ?? '';
  const expected = req.session?.csrfToken ?? '';
  const ok =
    expected.length > 0 &&
    sent.length === expected.length &&
    timingSafeEqual(Buffer.from(sent), Buffer.from(expected));
  if (!ok) {
    next(new AppError('csrf', 'The form has expired. Reload the page and try again.', 403));
    return;
  }
  next();
};

export const requireUser: RequestHandler = (req, _res, next) => {
  if (!req.session?.userId) return next(unauthenticated());
  next();
};

/** Regenerates the session id (sign-in) and keeps a fresh CSRF token in it. */
export function regenerateSession(req: Express.Request): Promise<void> {
  return new Promise((resolve, reject) => {
    req.session.regenerate((err) => (err ? reject(err) : resolve()));
  });
}

/**
 * Writes the session now rather than as the answer ends (express-session's default), so a
 * database that fails the write fails the request (503) instead of a sign-in that looked fine.
 */
export function saveSession(req: Express.Request): Promise<void> {
  return new Promise((resolve, reject) => {
    req.session.save((err) => (err ? reject(err) : resolve()));
  });
}

export function destroySession(req: Express.Request): Promise<void> {
  return new Promise((resolve, reject) => {
    req.session.destroy((err) => (err ? reject(err) : resolve()));
  });
}
