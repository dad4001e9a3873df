import { Router, type Request, type RequestHandler } from 'express';
import { ipKeyGenerator, rateLimit, type RateLimitInfo } from 'express-rate-limit';
import {
  emailConfirmBody,
  loginBody,
  passwordResetBody,
  passwordResetConfirmBody,
  passwordResetMessage,
  registerBody,
  registerMessage,
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

export interface AuthLimits {
  /** Failed sign-ins from one client address, whatever the e-mail, in 15 minutes. */
  signInFailuresPerClient: number;
  /** Registrations from one client address in an hour. */
  registrationsPerClient: number;
  /** Registrations naming one e-mail, from anywhere, in an hour (each one mails it). */
  registrationsPerAddress: number;
}

// One client address: `req.ip`, which honours TRUST_PROXY (the `trust proxy` setting).
// A bcrypt check costs about 270 ms of a core at the default cost: 30 failures are 8 s of CPU.
export const defaultAuthLimits: AuthLimits = {
  signInFailuresPerClient: 30,
  registrationsPerClient: 10,
  registrationsPerAddress: 3,
};

const client = (req: Request) => ipKeyGenerator(req.ip ?? '');
const address = (req: Request) => String(req.body?.email ?? '').toLowerCase();

/**
 * Counts attempts per key (only failed ones when `onlyFailures`) in a window; answers 429
 * with Retry-After past the limit.
 */
function attemptLimiter(
  db: Db,
  prefix: string,
  options: {
    limit: number;
    windowMs?: number;
    onlyFailures?: boolean;
    key: (req: Request) => string;
  },
): RequestHandler {
  return rateLimit({
    windowMs: options.windowMs ?? 15 * 60_000,
    limit: options.limit,
    skipSuccessfulRequests: options.onlyFailures ?? false,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    store: new PostgresRateLimitStore(db, prefix),
    keyGenerator: options.key,
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

export function authRoutes(db: Db, auth: AuthService, limits: Partial<AuthLimits> = {}): Router {
  const router = Router();
  const { signInFailuresPerClient, registrationsPerClient, registrationsPerAddress } = {
    ...defaultAuthLimits,
    ...limits,
  };
  const hour = 3600_000;

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

  /** A session for the account: a new id and CSRF token, as at every change of who is in. */
  async function signIn(req: Request, userId: string) {
    await regenerateSession(req);
    req.session.userId = userId;
    req.session.csrfToken = newCsrfToken();
    await saveSession(req);
    return req.session.csrfToken;
  }

  // 201 and a session only for an invitation link sent to this address; otherwise 202 and the
  // same body whether or not the address has an account (see the service).
  router.post(
    '/register',
    validate({ body: registerBody }),
    attemptLimiter(db, 'register-client', {
      limit: registrationsPerClient,
      windowMs: hour,
      key: client,
    }),
    attemptLimiter(db, 'register-address', {
      limit: registrationsPerAddress,
      windowMs: hour,
      key: address,
    }),
    async (req, res) => {
      const user = await auth.register(req.body);
      if (!user) {
        res.status(202).json({ message: registerMessage });
        return;
      }
      res.status(201).json({ user, csrfToken: await signIn(req, user.id) });
    },
  );

  router.post('/confirm-email', validate({ body: emailConfirmBody }), async (req, res) => {
    const user = await auth.confirmEmail(req.body.token);
    res.json({ user, csrfToken: await signIn(req, user.id) });
  });

  router.post(
    '/login',
    attemptLimiter(db, 'login-client', {
      limit: signInFailuresPerClient,
      onlyFailures: true,
      key: client,
    }),
    attemptLimiter(db, 'login', {
      limit: 10,
      onlyFailures: true,
      key: (req) => `${client(req)}|${address(req)}`,
    }),
    validate({ body: loginBody }),
    async (req, res) => {
      const user = await auth.login(req.body);
      res.json({ user, csrfToken: await signIn(req, user.id) });
    },
  );

  router.post('/logout', async (req, res) => {
    await destroySession(req);
    res.clearCookie(sessionCookieName).status(204).end();
  });

  router.post(
    '/password-reset',
    attemptLimiter(db, 'reset', {
      limit: 5,
      key: (req) => `${client(req)}|${address(req)}`,
    }),
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
