import { unlink } from 'node:fs/promises';
import { Router } from 'express';
import { projectId } from '@shared/api';
import { requireProjectRole, type ProjectAccess } from '../auth/roles';
import type { Db } from '../db/client';
import { findUserById } from '../db/users';
import { badRequest, unauthenticated } from '../http/errors';
import { validate } from '../http/validate';
import type { BundleService } from '../services/bundle';
import { receiveFiles, type UploadOptions } from './sheets';

/** Backup and move: a whole project as one zip, and a zip back as a new project. */
export function bundleRoutes(db: Db, bundles: BundleService, upload: UploadOptions): Router {
  const router = Router();

  router.get(
    '/:projectId/export',
    validate({ params: projectId }),
    requireProjectRole(db),
    async (_req, res) => {
      const { project } = res.locals.access as ProjectAccess;
      const stream = await bundles.exportProject(project);
      const stem =
        project.name
          .replace(/[^\w.-]+/g, '-')
          .replace(/^-+|-+$/g, '')
          .slice(0, 80) || 'project';
      res.attachment(`${stem}.fairsheet.zip`).type('application/zip');
      stream.on('error', (err) => res.destroy(err));
      stream.pipe(res);
    },
  );

  router.post('/import', receiveFiles({ ...upload, maxFiles: 1 }), async (req, res) => {
    const file = (req.files as Express.Multer.File[] | undefined)?.[0];
    if (!file) throw badRequest('Attach the bundle (.zip) in the form field "file".');
    try {
      const user = await findUserById(db, req.session.userId!);
      if (!user) throw unauthenticated();
      res.status(201).json(
        await bundles.importProject(file.path, {
          id: user.id,
          name: user.name,
          email: user.email,
        }),
      );
    } finally {
      await unlink(file.path).catch(() => undefined);
    }
  });

  return router;
}
