import { Router } from 'express';
import { sql } from 'drizzle-orm';
import type { Db } from '../db/client';

export function healthRoutes(db: Db): Router {
  const router = Router();
  router.get('/', async (_req, res) => {
    const db_ok = await db.execute(sql`select 1`).then(
      () => true,
      () => false,
    );
    res.status(db_ok ? 200 : 503).json({ ok: db_ok, db: db_ok ? 'up' : 'down' });
  });
  return router;
}
