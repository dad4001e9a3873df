import { Router } from 'express';
import { rateLimit } from 'express-rate-limit';
import { clearanceFor, tapDrillFor, threadByDesignation, ThreadError } from '@shared/engine';
import { solveBody, threadParams, threadQuery } from '@shared/api';
import { requireUser } from '../auth/session';
import type { Db } from '../db/client';
import { PostgresRateLimitStore } from '../db/rate-limit-store';
import { AppError, badRequest, notFound } from '../http/errors';
import { validate } from '../http/validate';
import type { SolvePool } from '../solve/pool';

/**
 * Stateless engine surfaces: solve a posted model, and the thread and drill tables. A solve runs
 * on the pool's threads under its time limit; bodies are capped at 2 MB by the API's JSON parser.
 */
export function engineRoutes(
  db: Db,
  solver: SolvePool,
  options: { solvesPerMinute?: number } = {},
): Router {
  const router = Router();

  router.post(
    '/solve',
    requireUser,
    rateLimit({
      windowMs: 60_000,
      limit: options.solvesPerMinute ?? 120,
      standardHeaders: 'draft-8',
      legacyHeaders: false,
      store: new PostgresRateLimitStore(db, 'solve'),
      keyGenerator: (req) => String(req.session.userId),
      handler: (_req, _res, next) =>
        next(
          new AppError(
            'rate_limited',
            'Too many solves in a minute. Wait a moment.',
            429,
            undefined,
            { 'Retry-After': '60' },
          ),
        ),
    }),
    validate({ body: solveBody }),
    async (req, res) => {
      const { model, monteCarlo } = req.body;
      res.type('json').send(await solver.solveJson(model, { monteCarlo }));
    },
  );

  router.get(
    '/reference/threads/:designation',
    requireUser,
    validate({ params: threadParams, query: threadQuery }),
    (req, res) => {
      const { percent, drills } = res.locals.query as {
        percent: number;
        drills?: Parameters<typeof tapDrillFor>[2];
      };
      try {
        const thread = threadByDesignation(String(req.params.designation));
        const tap = tapDrillFor(thread, percent, drills);
        const clearance = clearanceFor(thread);
        res.json({
          designation: thread.designation,
          series: thread.series,
          majorDiameterMm: thread.majorDiameterMm,
          pitchMm: thread.pitchMm,
          tpi: thread.tpi,
          minorDiameterMm: thread.minorDiameterMm,
          tapDrill: tap,
          clearance: { close: clearance.close, free: clearance.free },
          source: thread.source,
        });
      } catch (err) {
        if (!(err instanceof ThreadError)) throw err;
        if (err.code === 'unknown-size' || err.code === 'unknown-pitch')
          throw notFound(`The thread “${err.details.input}”`);
        throw badRequest(err.message, { fields: [{ path: 'designation', message: err.message }] });
      }
    },
  );

  return router;
}
