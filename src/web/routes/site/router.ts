import { Router } from 'express';
import type { AppDeps } from '../../deps.ts';
import { findElectionIdByShortRef } from '../../../elections/shortRef.ts';
import { ElectionNotFound } from '../../../elections/errors.ts';

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

  /** The short ballot address printed on slips: /v/7k3m9q2x leads to the election's ballot page. */
  router.get('/v/:ref', async (req, res) => {
    const id = await findElectionIdByShortRef(deps.ctx.knex, String(req.params.ref));
    if (!id) throw new ElectionNotFound();
    res.redirect(303, `/vote/${id}`);
  });

  return router;
}
