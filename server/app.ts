import express, { type Express } from 'express';
import helmet from 'helmet';
import { pinoHttp } from 'pino-http';
import { existsSync } from 'node:fs';
import path from 'node:path';
import type { PasswordHasher } from './auth/passwords';
import { requireCsrf, requireUser, sessionMiddleware } from './auth/session';
import type { Database } from './db/client';
import { errorHandler, notFound } from './http/errors';
import type { Mailer } from './mail/mailer';
import { authRoutes, type AuthLimits } from './routes/auth';
import { devMailRoutes } from './routes/dev-mail';
import { engineRoutes } from './routes/engine';
import { healthRoutes } from './routes/health';
import { modelRoutes } from './routes/models';
import { projectRoutes } from './routes/projects';
import { measurementRoutes } from './routes/measurements';
import { sheetRoutes } from './routes/sheets';
import { bundleRoutes } from './routes/bundle';
import { invitationLinkRoutes, teamRoutes, type InvitationLimits } from './routes/team';
import { shopSheetRoutes } from './routes/shop-sheet';
import { createActivityService } from './services/activity';
import { createAuthService } from './services/auth';
import { createBundleService } from './services/bundle';
import { createCheckService } from './services/checks';
import { createCommentService } from './services/comments';
import { createCorrectionService } from './services/corrections';
import { createInvitationService } from './services/invitations';
import { createMemberService } from './services/members';
import { createModelService } from './services/models';
import { createProjectService } from './services/projects';
import { createMeasurementService } from './services/measurements';
import { createSheetService } from './services/sheets';
import { createShopSheetService } from './services/shop-sheet';
import { defaultSolvePool, type SolvePool } from './solve/pool';
import { createLocalStorage } from './storage/local';
import type { BlobStorage } from './storage/storage';

export interface AppDeps {
  database: Database;
  mailer: Mailer;
  /** Where uploaded sheets are kept (local disk or an S3 bucket); default local `uploads/`. */
  storage?: BlobStorage;
  /** Largest accepted upload per file, bytes (default 60 MB). */
  uploadMaxBytes?: number;
  /** Where multipart uploads are staged while checked (default: the system temp folder). */
  uploadTempDir?: string;
  hasher: PasswordHasher;
  sessionSecret: string;
  appUrl: string;
  production: boolean;
  /** Folder of the local mail sink, for the /dev/mail page (never in production). */
  mailDir?: string;
  /** Built client (vite build output) to serve with an SPA fallback. */
  clientDir?: string;
  trustProxy?: string;
  /** Request log level (pino); tests leave it silent. */
  logLevel?: 'silent' | 'error' | 'warn' | 'info' | 'debug';
  /** Solves one user may ask for a minute (default 120). */
  solvesPerMinute?: number;
  /** Where every solve runs (default: the process's pool, sized to the cores). */
  solver?: SolvePool;
  /** Sign-in and registration limits per client address and e-mail (defaults in routes/auth). */
  authLimits?: Partial<AuthLimits>;
  /** Invitations and resends per project and per address (defaults in routes/team). */
  invitationLimits?: Partial<InvitationLimits>;
  /** Where request logs go (default standard output). */
  logStream?: NodeJS.WritableStream;
}

function parseTrustProxy(value: string): boolean | number | string {
  if (value === 'true') return true;
  if (value === 'false') return false;
  return /^\d+$/.test(value) ? Number(value) : value;
}

/** Builds the whole app from its dependencies; never listens (server/index.ts does). */
export function createApp(deps: AppDeps): Express {
  const { db, pool } = deps.database;
  const app = express();
  app.disable('x-powered-by');
  // One structured line per request. Cookies, CSRF tokens and credentials never reach the log;
  // bodies (passwords, reset tokens) are not logged at all. At `silent` there is nothing to log,
  // and the middleware (a child logger per request) is left out.
  if ((deps.logLevel ?? 'silent') !== 'silent') {
    app.use(
      pinoHttp(
        {
          level: deps.logLevel,
          redact: {
            paths: [
              'req.headers.cookie',
              'req.headers.authorization',
              'req.headers["x-csrf-token"]',
              'res.headers["set-cookie"]',
            ],
            censor: '[hidden]',
          },
          serializers: {
            req: (req: { method: string; url: string; id: unknown }) => ({
              id: req.id,
              method: req.method,
              url: req.url
                .replace(/([?&]token=)[^&]+/, '$1[hidden]')
                .replace(/(\/invitations\/)[\w-]{20,}/, '$1[hidden]'),
            }),
            // The status is what a request log needs; the headers are the same on every line.
            res: (res: { statusCode: number }) => ({ statusCode: res.statusCode }),
          },
          autoLogging: { ignore: (req) => req.url === '/api/health' },
        },
        deps.logStream,
      ),
    );
  }
  // Everything the client needs is shipped with it: scripts, fonts and workers come from our own
  // origin only. Naive UI sets styles at run time (hence inline styles); pdf.js may compile
  // WebAssembly decoders; canvases and previews use blob: and data: images.
  app.use(
    helmet({
      contentSecurityPolicy: {
        useDefaults: false,
        directives: {
          defaultSrc: ["'self'"],
          scriptSrc: ["'self'", "'wasm-unsafe-eval'"],
          styleSrc: ["'self'", "'unsafe-inline'"],
          imgSrc: ["'self'", 'data:', 'blob:'],
          fontSrc: ["'self'", 'data:'],
          connectSrc: ["'self'"],
          workerSrc: ["'self'", 'blob:'],
          objectSrc: ["'none'"],
          baseUri: ["'self'"],
          formAction: ["'self'"],
          frameAncestors: ["'none'"],
        },
      },
      // Plain http on loopback in development: no HSTS, no upgrade.
      strictTransportSecurity: deps.production,
    }),
  );
  if (deps.trustProxy) app.set('trust proxy', parseTrustProxy(deps.trustProxy));

  const auth = createAuthService({
    db,
    hasher: deps.hasher,
    mailer: deps.mailer,
    appUrl: deps.appUrl,
  });
  const activity = createActivityService(db);
  const solver = deps.solver ?? defaultSolvePool();
  const models = createModelService(db, activity, solver);
  const storage = deps.storage ?? createLocalStorage('uploads');
  const sheets = createSheetService({ db, storage });
  const projects = createProjectService(db, models, sheets.releaseFiles);
  const uploadMaxBytes = deps.uploadMaxBytes ?? 60 * 1024 * 1024;

  const invitations = createInvitationService({
    db,
    mailer: deps.mailer,
    appUrl: deps.appUrl,
    activity,
  });
  const team = {
    invitations,
    members: createMemberService(db, activity),
    checks: createCheckService(db, models, activity),
    comments: createCommentService({ db, mailer: deps.mailer, appUrl: deps.appUrl, activity }),
    corrections: createCorrectionService(db, activity),
    activity,
  };

  const api = express.Router();
  api.use(express.json({ limit: '2mb' }));
  api.use('/health', healthRoutes(db));
  api.use(sessionMiddleware({ pool, secret: deps.sessionSecret, secure: deps.production }));
  api.use(requireCsrf);
  api.use('/auth', authRoutes(db, auth, deps.authLimits));
  api.use(engineRoutes(db, solver, { solvesPerMinute: deps.solvesPerMinute }));
  api.use('/invitations', invitationLinkRoutes(db, invitations));
  api.use(
    '/projects',
    requireUser,
    projectRoutes(db, projects),
    modelRoutes(db, models),
    shopSheetRoutes(
      db,
      createShopSheetService(models, {
        solver,
        // Each row shows its checks, and the title block the corrections of the source sheets.
        reviews: async (projectId, stored) => {
          const [{ checks }, corrections] = await Promise.all([
            team.checks.list(projectId, stored),
            team.corrections.list(projectId),
          ]);
          const byName = new Map(
            checks.map((c) => [c.dimension, { state: c.state, checker: c.checkedBy.name }]),
          );
          return {
            checkOf: (name) => byName.get(name),
            corrections: corrections.map((c) => ({
              // People read the sheet's title; a sheet since removed is said so, not its id.
              sheet: c.sheetId ? (c.sheetTitle ?? 'a removed sheet') : null,
              dimension: c.dimension,
              wrong: c.wrong,
              corrected: c.corrected,
              reason: [c.reason, c.sourceNote ? `${c.source}: ${c.sourceNote}` : c.source]
                .filter(Boolean)
                .join(' — '),
              by: c.author.name,
              date: c.createdAt.slice(0, 10),
            })),
          };
        },
      }),
    ),
    sheetRoutes(db, sheets, { maxBytes: uploadMaxBytes, tempDir: deps.uploadTempDir }),
    measurementRoutes(db, createMeasurementService(db, models)),
    teamRoutes(db, team, deps.invitationLimits),
    // A bundle carries every file of a project: up to 20 uploads' worth.
    bundleRoutes(
      db,
      createBundleService({
        db,
        storage,
        sheets,
        ...team,
        tempDir: deps.uploadTempDir,
        limits: { maxFileBytes: uploadMaxBytes },
        solver,
      }),
      { maxBytes: uploadMaxBytes * 20, tempDir: deps.uploadTempDir },
    ),
  );
  api.use(() => {
    throw notFound('That API route');
  });
  app.use('/api', api);

  if (!deps.production && deps.mailDir) app.use('/dev/mail', devMailRoutes(deps.mailDir));

  if (deps.clientDir && existsSync(path.join(deps.clientDir, 'index.html'))) {
    const clientDir = deps.clientDir;
    app.use(
      '/assets',
      express.static(path.join(clientDir, 'assets'), { immutable: true, maxAge: '1y' }),
    );
    app.use(express.static(clientDir, { index: false }));
    app.get('/{*splat}', (_req, res) => {
      res.set('Cache-Control', 'no-cache').sendFile(path.join(clientDir, 'index.html'));
    });
  }

  app.use(errorHandler({ production: deps.production }));
  return app;
}
