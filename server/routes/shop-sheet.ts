import { Router } from 'express';
import { projectId, shopSheetPdfQuery, type PaperSize } from '@shared/api';
import { requireProjectRole, type ProjectAccess } from '../auth/roles';
import type { Db } from '../db/client';
import { validate } from '../http/validate';
import { shopSheetFileName, type ShopSheetService } from '../services/shop-sheet';

const access = (locals: Record<string, unknown>) => locals.access as ProjectAccess;

/** The shop sheet as JSON (for the print view), PDF and CSV; any member may read it. */
export function shopSheetRoutes(db: Db, shopSheets: ShopSheetService): Router {
  const router = Router();
  const params = validate({ params: projectId });
  const readers = requireProjectRole(db);

  router.get('/:projectId/shop-sheet', params, readers, async (_req, res) => {
    res.json(await shopSheets.sheet(access(res.locals).project));
  });

  router.get(
    '/:projectId/shop-sheet.pdf',
    params,
    validate({ query: shopSheetPdfQuery }),
    readers,
    async (_req, res) => {
      const { paper } = res.locals.query as { paper: PaperSize };
      const { project } = access(res.locals);
      const sheet = await shopSheets.sheet(project);
      const pdf = await shopSheets.render(sheet, paper);
      res
        .attachment(shopSheetFileName(sheet, 'pdf').replace(/\.pdf$/, `-${paper}.pdf`))
        .type('application/pdf')
        .set('Cache-Control', 'no-store')
        .send(pdf);
    },
  );

  router.get('/:projectId/shop-sheet.csv', params, readers, async (_req, res) => {
    const { project } = access(res.locals);
    const sheet = await shopSheets.sheet(project);
    res
      .attachment(shopSheetFileName(sheet, 'csv'))
      .type('text/csv; charset=utf-8')
      .set('Cache-Control', 'no-store')
      .send(shopSheets.toCsv(sheet));
  });

  return router;
}
