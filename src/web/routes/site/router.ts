import { Router } from 'express';
import type { AppDeps } from '../../deps.ts';

export function siteRouter(deps: AppDeps): Router {
  const router = Router();

  router.get('/healthz', async (_req, res) => {
    try {
      await deps.ctx.knex.raw('select 1');
      res.set('Cache-Control', 'no-store').json({ status: 'ok', db: deps.ctx.engine });
    } catch {
      res.status(503).set('Cache-Control', 'no-store').json({ status: 'unavailable', db: deps.ctx.engine });
    }
  });

  router.get('/', (_req, res) => {
    res.render('site/home', { title: 'Private approval votes' });
  });

  return router;
}
