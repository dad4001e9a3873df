import { Router, type RequestHandler } from 'express';
import { ipKeyGenerator, rateLimit, type RateLimitInfo } from 'express-rate-limit';
import {
  loginBody,
  passwordResetBody,
  passwordResetConfirmBody,
  passwordResetMessage,
  registerBody,
} from '@shared/api';
import {
  destroySession,
  newCsrfToken,
  regenerateSession,
  saveSession,
  sessionCookieName,
} from '../auth/session';
import type { Db } from '../db/client';
import { PostgresRateLimitStore } from '../db/rate-limit-store';
import { AppError } from '../http/errors';
import { validate } from '../http/validate';
import type { AuthService } from '../services/auth';

/**
 * Counts attempts per address and account (only failed ones when `onlyFailures`) in a
 * 15-minute window; answers 429 with Retry-After past the limit.
 */
function attemptLimiter(
  db: Db,
  prefix: string,
  limit: number,
  onlyFailures: boolean,
): RequestHandler {
  return rateLimit({
    windowMs: 15 * 60_000,
    limit,
    skipSuccessfulRequests: onlyFailures,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    store: new PostgresRateLimitStore(db, prefix),
    keyGenerator: (req) =>
      `${ipKeyGenerator(req.ip ?? '')}|${String(req.body?.email ?? '').toLowerCase()}`,
    handler: (req, _res, next) => {
      const info = (req as typeof req & { rateLimit?: RateLimitInfo }).rateLimit;
      const resetTime = info?.resetTime?.getTime() ?? Date.now() + 60_000;
      const seconds = Math.max(1, Math.ceil((resetTime - Date.now()) / 1000));
      next(
        new AppError(
          'rate_limited',
          `Too many attempts. Try again in ${Math.ceil(seconds / 60)} minutes.`,
          429,
          { retryAfterSeconds: seconds },
          { 'Retry-After': String(seconds) },
        ),
      );
    },
  });
}

export function authRoutes(db: Db, auth: AuthService): Router {
  const router = Router();

  router.get('/session', async (req, res) => {
    let changed = false;
    if (!req.session.csrfToken) {
      req.session.csrfToken = newCsrfToken();
      changed = true;
    }
    const user = await auth.currentUser(req.session.userId);
    if (!user && req.session.userId) {
      delete req.session.userId;
      changed = true;
    }
    if (changed) await saveSession(req);
    res.json({ user, csrfToken: req.session.csrfToken });
  });

  router.post('/register', validate({ body: registerBody }), async (req, res) => {
    const user = await auth.register(req.body);
    await regenerateSession(req);
    req.session.userId = user.id;
    req.session.csrfToken = newCsrfToken();
    await saveSession(req);
    res.status(201).json({ user, csrfToken: req.session.csrfToken });
  });

  router.post(
    '/login',
    attemptLimiter(db, 'login', 10, true),
    validate({ body: loginBody }),
    async (req, res) => {
      const user = await auth.login(req.body);
      await regenerateSession(req);
      req.session.userId = user.id;
      req.session.csrfToken = newCsrfToken();
      await saveSession(req);
      res.json({ user, csrfToken: req.session.csrfToken });
    },
  );

  router.post('/logout', async (req, res) => {
    await destroySession(req);
    res.clearCookie(sessionCookieName).status(204).end();
  });

  router.post(
    '/password-reset',
    attemptLimiter(db, 'reset', 5, false),
    validate({ body: passwordResetBody }),
    async (req, res) => {
      await auth.requestPasswordReset(req.body.email);
      res.status(202).json({ message: passwordResetMessage });
    },
  );

  router.post(
    '/password-reset/confirm',
    validate({ body: passwordResetConfirmBody }),
    async (req, res) => {
      await auth.confirmPasswordReset(req.body.token, req.body.password);
      res.json({ message: 'Password changed. Sign in with the new one.' });
    },
  );

  return router;
}
