import { Router } from 'express';
import { compareQuery, projectId, restoreBody, revisionParams, saveModelBody } from '@shared/api';
import { editors, requireProjectRole, type ProjectAccess } from '../auth/roles';
import type { Db } from '../db/client';
import { validate } from '../http/validate';
import type { ModelService } from '../services/models';

const access = (locals: Record<string, unknown>) => locals.access as ProjectAccess;

/** The project's model, its saves and its history (mounted under /api/projects). */
export function modelRoutes(db: Db, models: ModelService): Router {
  const router = Router();
  const params = validate({ params: projectId });
  const readers = requireProjectRole(db);
  const writers = requireProjectRole(db, editors);

  router.get('/:projectId/model', params, readers, async (req, res) => {
    const { project, modelRevision } = access(res.locals);
    const { etag, body, ...packed } = await models.currentJson(project.id, modelRevision);
    // Revalidated on every use (the revision may move); an unchanged model costs no query beyond
    // the access check, which read the revision.
    res.set({ ETag: etag, 'Cache-Control': 'private, no-cache', Vary: 'Accept-Encoding' });
    if (req.get('if-none-match') === etag) {
      res.status(304).end();
      return;
    }
    res.type('application/json');
    // The smallest the client takes (browsers list gzip first but take brotli as well).
    const encoding = (['br', 'gzip'] as const).find((e) => req.acceptsEncodings(e) === e);
    if (encoding) {
      res.set('Content-Encoding', encoding).send(packed[encoding]);
    } else {
      res.send(body);
    }
  });

  router.put(
    '/:projectId/model',
    params,
    writers,
    validate({ body: saveModelBody }),
    async (req, res) => {
      const { revision, model, note } = req.body;
      res.json(
        await models.save(
          access(res.locals).project.id,
          req.session.userId!,
          revision,
          model,
          note,
        ),
      );
    },
  );

  router.get('/:projectId/model/export', params, readers, async (_req, res) => {
    const { project } = access(res.locals);
    const { model, revision } = await models.current(project.id);
    const file = `${
      project.name
        .replace(/[^\w.-]+/g, '-')
        .replace(/^-+|-+$/g, '')
        .slice(0, 80) || 'model'
    }-r${revision}.json`;
    res
      .attachment(file)
      .type('application/json')
      .send(JSON.stringify(model, null, 2));
  });

  router.get('/:projectId/history', params, readers, async (_req, res) => {
    res.json({ entries: await models.history(access(res.locals).project.id) });
  });

  router.get(
    '/:projectId/history/:revision',
    validate({ params: revisionParams }),
    readers,
    async (req, res) => {
      res.json(await models.revision(access(res.locals).project.id, Number(req.params.revision)));
    },
  );

  router.post(
    '/:projectId/history/:revision/restore',
    validate({ params: revisionParams, body: restoreBody }),
    writers,
    async (req, res) => {
      const { project } = access(res.locals);
      res.json(
        await models.restore(
          project.id,
          req.session.userId!,
          req.body.revision,
          Number(req.params.revision),
        ),
      );
    },
  );

  router.get(
    '/:projectId/compare',
    params,
    validate({ query: compareQuery }),
    readers,
    async (_req, res) => {
      const { from, to } = res.locals.query as { from: number; to: number };
      res.json(await models.compare(access(res.locals).project.id, from, to));
    },
  );

  return router;
}
