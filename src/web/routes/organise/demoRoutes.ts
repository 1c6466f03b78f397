import { Router } from 'express';
import { isFirstRunOpen } from '../../../accounts/firstRun.ts';
import { findDemo, seedDemo } from '../../../demo/seedDemo.ts';
import { DemoNotOffered } from '../../../demo/errors.ts';
import { NotFound } from '../../../errors.ts';
import type { AppDeps } from '../../deps.ts';
import { noStore } from '../../middleware/security.ts';
import { FIRST_RUN_PATH, requireOrganiser, startSession } from './auth.ts';

export const DEMO_PATH = '/organise/demo';

/**
 * The first-run page's "explore with sample elections" button. Offered only while the site has
 * no real organiser. The seeding runs at most once (seedDemo claims it), so a double-submitted
 * form adds nothing twice; each submission signs in as the demo organiser and lands on the
 * page listing the sample elections (post/redirect/get).
 */
export function demoRoutes(deps: AppDeps): Router {
  const router = Router();
  const { ctx } = deps;

  router.post(`${FIRST_RUN_PATH}/demo`, async (req, res) => {
    if (!(await isFirstRunOpen(ctx.knex))) throw new DemoNotOffered();
    const summary = await seedDemo(ctx);
    await startSession(req, summary.organiser.id, ctx.now(), true);
    // Shown on the next page view only, then dropped from the session.
    if (summary.organiser.password) req.session.demoPassword = summary.organiser.password;
    res.redirect(303, DEMO_PATH);
  });

  router.get(DEMO_PATH, requireOrganiser(deps), noStore, async (req, res) => {
    const demo = await findDemo(ctx);
    if (!demo || res.locals.demoOrganiser !== true) throw new NotFound();
    const password = req.session.demoPassword ?? null;
    delete req.session.demoPassword;
    const where = ctx.mail?.mailer.where;
    res.render('organise/demo', {
      title: 'Sample elections',
      demo,
      password,
      firstRunOpen: await isFirstRunOpen(ctx.knex),
      outbox: where?.kind === 'outbox' ? where.folder : null,
    });
  });

  return router;
}
