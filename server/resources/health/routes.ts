// GET /api/health (server and database) and GET /api/health/live (the process only, no database;
// also the bare baseline of the server benchmark).
import { Router } from 'express';
import type { AppContext } from '../../context';
import { allow } from '../../http/errors';
import { canAskHealth } from './policy';

export function healthRoutes(ctx: AppContext): Router {
  const router = Router();
  router.get('/api/health/live', (_req, res) => {
    allow(canAskHealth());
    res.json({ ok: true });
  });
  router.get('/api/health', async (_req, res) => {
    allow(canAskHealth());
    let database = false;
    try {
      await ctx.db.sequelize.query('SELECT 1');
      database = true;
    } catch {
      database = false;
    }
    res.status(database ? 200 : 503).json({ ok: database, database });
  });
  return router;
}
