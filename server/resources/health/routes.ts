// GET /api/health (server and database) and GET /api/health/live (the process only, no database;
// also the bare baseline of the server benchmark).
import { Router } from 'express';
import type { AppContext } from '../../context';
import { allow } from '../../http/errors';
import { canAskHealth } from './policy';
import { send } from '../../http/present';
import type { Health } from '../../../shared/report/api';

export function healthRoutes(ctx: AppContext): Router {
  const router = Router();
  router.get('/api/health/live', (_req, res) => {
    allow(canAskHealth());
    send<Health>(res, { ok: true });
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
    send<Health>(res.status(database ? 200 : 503), { ok: database, database });
  });
  return router;
}
