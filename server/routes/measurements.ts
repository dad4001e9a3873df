import { Router } from 'express';
import { measureBody, sheetParams } from '@shared/api';
import { editors, requireProjectRole, type ProjectAccess } from '../auth/roles';
import type { Db } from '../db/client';
import { validate } from '../http/validate';
import type { MeasurementService } from '../services/measurements';

/** Measurements between a sheet's pins, each one model revision (mounted under /api/projects). */
export function measurementRoutes(db: Db, measurements: MeasurementService): Router {
  const router = Router();

  router.post(
    '/:projectId/sheets/:sheetId/measurements',
    validate({ params: sheetParams }),
    requireProjectRole(db, editors),
    validate({ body: measureBody }),
    async (req, res) => {
      const projectId = (res.locals.access as ProjectAccess).project.id;
      const sheetId = String(req.params.sheetId);
      res.json(await measurements.measure(projectId, sheetId, req.session.userId!, req.body));
    },
  );

  return router;
}
