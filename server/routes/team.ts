import { Router, type Request, type RequestHandler } from 'express';
import { rateLimit, type RateLimitInfo } from 'express-rate-limit';
import {
  activityQuery,
  checkBody,
  checkerRoles,
  checkParams,
  commentBody,
  commentQuery,
  correctionBody,
  invitationBody,
  invitationParams,
  invitationToken,
  memberParams,
  memberRoleBody,
  projectId,
  reviewerRoles,
} from '@shared/api';
import { anyMember, requireProjectRole, type ProjectAccess } from '../auth/roles';
import { requireUser } from '../auth/session';
import type { Db } from '../db/client';
import { PostgresRateLimitStore } from '../db/rate-limit-store';
import { findUserById } from '../db/users';
import { AppError, unauthenticated } from '../http/errors';
import { validate } from '../http/validate';
import type { ActivityService } from '../services/activity';
import type { CheckService } from '../services/checks';
import type { CommentService } from '../services/comments';
import type { CorrectionService } from '../services/corrections';
import type { InvitationService } from '../services/invitations';
import type { MemberService } from '../services/members';

export interface TeamServices {
  invitations: InvitationService;
  members: MemberService;
  checks: CheckService;
  comments: CommentService;
  corrections: CorrectionService;
  activity: ActivityService;
}

const access = (locals: Record<string, unknown>) => locals.access as ProjectAccess;

async function me(db: Db, req: Request) {
  const user = req.session.userId ? await findUserById(db, req.session.userId) : undefined;
  if (!user) throw unauthenticated();
  return { id: user.id, name: user.name };
}

export interface InvitationLimits {
  /** Invitations and resends one project sends in an hour. */
  perProject: number;
  /** Invitations and resends to one address, from every project together, in a day. */
  perAddress: number;
}

// Each one mails an address the sender chose: the limits keep our sender from being used to
// flood one inbox (owning a project is free) or to mail a list.
export const defaultInvitationLimits: InvitationLimits = { perProject: 30, perAddress: 5 };

/** Counts invitations sent (refusals do not count); 429 with Retry-After past the limit. */
function sendLimiter(
  db: Db,
  prefix: string,
  limit: number,
  windowMs: number,
  key: (req: Request) => string | Promise<string>,
  message: string,
): RequestHandler {
  return rateLimit({
    windowMs,
    limit,
    skipFailedRequests: true,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    store: new PostgresRateLimitStore(db, prefix),
    keyGenerator: key,
    handler: (req, _res, next) => {
      const info = (req as typeof req & { rateLimit?: RateLimitInfo }).rateLimit;
      const resetTime = info?.resetTime?.getTime() ?? Date.now() + windowMs;
      const seconds = Math.max(1, Math.ceil((resetTime - Date.now()) / 1000));
      next(
        new AppError(
          'rate_limited',
          message,
          429,
          { retryAfterSeconds: seconds },
          {
            'Retry-After': String(seconds),
          },
        ),
      );
    },
  });
}

const reviewers = reviewerRoles;
const checkers = checkerRoles;

/** Team and review routes under /api/projects/:projectId. */
export function teamRoutes(
  db: Db,
  s: TeamServices,
  limits: Partial<InvitationLimits> = {},
): Router {
  const router = Router();
  const params = validate({ params: projectId });
  const owners = requireProjectRole(db, ['owner']);
  const { perProject, perAddress } = { ...defaultInvitationLimits, ...limits };
  const hour = 3600_000;
  const perProjectLimit = sendLimiter(
    db,
    'invite-project',
    perProject,
    hour,
    (req) => String(req.params.projectId),
    'This project has sent many invitations in the last hour. Try again later.',
  );
  // Both routes count into the same counters (one store prefix), so a resend is an invitation.
  const perAddressLimit = (address: (req: Request) => Promise<string>) =>
    sendLimiter(
      db,
      'invite-address',
      perAddress,
      24 * hour,
      address,
      'That address has been sent many invitations today. Try again tomorrow.',
    );

  router.get('/:projectId/invitations', params, owners, async (_req, res) => {
    res.json({ invitations: await s.invitations.list(access(res.locals).project.id) });
  });
  router.post(
    '/:projectId/invitations',
    params,
    owners,
    validate({ body: invitationBody }),
    perProjectLimit,
    perAddressLimit(async (req) => String(req.body.email)),
    async (req, res) => {
      const { project } = access(res.locals);
      res
        .status(201)
        .json(
          await s.invitations.create(project, await me(db, req), req.body.email, req.body.role),
        );
    },
  );
  router.delete(
    '/:projectId/invitations/:invitationId',
    validate({ params: invitationParams }),
    owners,
    async (req, res) => {
      await s.invitations.revoke(
        access(res.locals).project.id,
        String(req.params.invitationId),
        req.session.userId!,
      );
      res.status(204).end();
    },
  );
  router.post(
    '/:projectId/invitations/:invitationId/resend',
    validate({ params: invitationParams }),
    owners,
    perProjectLimit,
    perAddressLimit(
      async (req) =>
        (await s.invitations.addressOf(
          String(req.params.projectId),
          String(req.params.invitationId),
        )) ?? `unknown:${String(req.params.invitationId)}`,
    ),
    async (req, res) => {
      res.json(
        await s.invitations.resend(
          access(res.locals).project,
          String(req.params.invitationId),
          await me(db, req),
        ),
      );
    },
  );

  router.patch(
    '/:projectId/members/:userId',
    validate({ params: memberParams, body: memberRoleBody }),
    owners,
    async (req, res) => {
      await s.members.changeRole(
        access(res.locals).project.id,
        req.session.userId!,
        String(req.params.userId),
        req.body.role,
      );
      res.status(204).end();
    },
  );
  router.delete(
    '/:projectId/members/:userId',
    validate({ params: memberParams }),
    requireProjectRole(db, anyMember),
    async (req, res) => {
      const { project, role } = access(res.locals);
      await s.members.remove(
        project.id,
        { id: req.session.userId!, role },
        String(req.params.userId),
      );
      res.status(204).end();
    },
  );

  router.get('/:projectId/checks', params, requireProjectRole(db), async (_req, res) => {
    res.json(await s.checks.list(access(res.locals).project.id));
  });
  router.post(
    '/:projectId/checks',
    params,
    requireProjectRole(db, checkers),
    validate({ body: checkBody }),
    async (req, res) => {
      res
        .status(201)
        .json(
          await s.checks.create(
            access(res.locals).project.id,
            await me(db, req),
            req.body.dimension,
          ),
        );
    },
  );
  router.delete(
    '/:projectId/checks/:dimension',
    validate({ params: checkParams }),
    requireProjectRole(db, checkers),
    async (req, res) => {
      await s.checks.remove(
        access(res.locals).project.id,
        req.session.userId!,
        String(req.params.dimension),
      );
      res.status(204).end();
    },
  );

  router.get(
    '/:projectId/comments',
    params,
    requireProjectRole(db),
    validate({ query: commentQuery }),
    async (_req, res) => {
      res.json({
        comments: await s.comments.list(access(res.locals).project.id, res.locals.query),
      });
    },
  );
  router.post(
    '/:projectId/comments',
    params,
    requireProjectRole(db, reviewers),
    validate({ body: commentBody }),
    async (req, res) => {
      res
        .status(201)
        .json(await s.comments.create(access(res.locals).project, await me(db, req), req.body));
    },
  );

  router.get('/:projectId/corrections', params, requireProjectRole(db), async (_req, res) => {
    res.json({ corrections: await s.corrections.list(access(res.locals).project.id) });
  });
  router.post(
    '/:projectId/corrections',
    params,
    requireProjectRole(db, reviewers),
    validate({ body: correctionBody }),
    async (req, res) => {
      res
        .status(201)
        .json(
          await s.corrections.create(access(res.locals).project.id, await me(db, req), req.body),
        );
    },
  );

  router.get(
    '/:projectId/activity',
    params,
    requireProjectRole(db),
    validate({ query: activityQuery }),
    async (_req, res) => {
      const { kind, limit } = res.locals.query as { kind?: never; limit: number };
      res.json({ entries: await s.activity.list(access(res.locals).project.id, kind, limit) });
    },
  );

  return router;
}

/** The invitation link's routes (/api/invitations/:token): a preview for anyone, accept when signed in. */
export function invitationLinkRoutes(db: Db, invitations: InvitationService): Router {
  const router = Router();
  router.get('/:token', validate({ params: invitationToken }), async (req, res) => {
    res.json(await invitations.preview(String(req.params.token)));
  });
  router.post(
    '/:token/accept',
    requireUser,
    validate({ params: invitationToken }),
    async (req, res) => {
      res.json(await invitations.accept(String(req.params.token), await me(db, req)));
    },
  );
  return router;
}
