import { Router } from 'express';
import { createProjectBody, projectId, updateProjectBody } from '@shared/api';
import { editors, requireProjectRole, type ProjectAccess } from '../auth/roles';
import type { Db } from '../db/client';
import { validate } from '../http/validate';
import type { ProjectService } from '../services/projects';
import { toProject } from '../services/projects';

export function projectRoutes(db: Db, projects: ProjectService): Router {
  const router = Router();
  const params = validate({ params: projectId });

  router.get('/', async (req, res) => {
    res.json({ projects: await projects.list(req.session.userId!) });
  });

  router.post('/', validate({ body: createProjectBody }), async (req, res) => {
    res.status(201).json(await projects.create(req.session.userId!, req.body));
  });

  router.get('/:projectId', params, requireProjectRole(db), (_req, res) => {
    const { project, role } = res.locals.access as ProjectAccess;
    res.json(toProject(project, role));
  });

  router.patch(
    '/:projectId',
    params,
    requireProjectRole(db, editors),
    validate({ body: updateProjectBody }),
    async (req, res) => {
      const { project, role } = res.locals.access as ProjectAccess;
      res.json(await projects.update(project.id, role, req.body));
    },
  );

  router.delete('/:projectId', params, requireProjectRole(db, ['owner']), async (_req, res) => {
    await projects.remove((res.locals.access as ProjectAccess).project.id);
    res.status(204).end();
  });

  router.get('/:projectId/members', params, requireProjectRole(db), async (_req, res) => {
    res.json({ members: await projects.members((res.locals.access as ProjectAccess).project.id) });
  });

  return router;
}
