import { Router, type Response } from 'express';
import { closeElection } from '../../../elections/closeElection.ts';
import { loadDashboard } from '../../../elections/dashboard.ts';
import { openElection } from '../../../elections/openElection.ts';
import { canCloseEarly } from '../../../elections/status.ts';
import { isVeiltallyError } from '../../../errors.ts';
import type { AppDeps } from '../../deps.ts';
import { dashboardView } from '../../presenters/dashboard.ts';
import { organiserOf } from './auth.ts';
import { readOpenMode } from './lifecycleSchema.ts';
import { renderNotNow, stateConflictMessage } from './notNow.ts';

/** The election dashboard, and opening and closing with a confirmation page before each. */
export function dashboardRoutes(deps: AppDeps): Router {
  const router = Router();
  const { ctx } = deps;
  const load = (res: Response, id: string) => loadDashboard(ctx, { electionId: id, organiserId: organiserOf(res).id });

  router.get('/organise/elections/:id', async (req, res) => {
    const d = dashboardView(await load(res, req.params.id));
    res.render('organise/dashboard', { title: d.title, d });
  });

  async function renderOpen(res: Response, id: string, status: number, problem: string | null) {
    const dash = await load(res, id);
    const d = dashboardView(dash);
    if (dash.election.state !== 'draft') return renderNotNow(res, d, 'This election has already been opened.');
    res.status(status).render('organise/open', {
      title: `Open ${d.title}`,
      d,
      problem,
      canSchedule: dash.election.opensAt > dash.now,
      closesPassed: dash.election.closesAt <= dash.now,
    });
  }

  router.get('/organise/elections/:id/open', async (req, res) => {
    await renderOpen(res, req.params.id, 200, null);
  });

  router.post('/organise/elections/:id/open', async (req, res) => {
    const mode = readOpenMode(req.body);
    if (!mode) return renderOpen(res, req.params.id, 400, 'Choose “Open now” or “Lock and schedule”.');
    try {
      await openElection(ctx, { electionId: req.params.id, organiserId: organiserOf(res).id, mode });
    } catch (e) {
      // Rule failures (no live code, times passed) re-render the confirmation with the reason;
      // renderOpen itself refuses if the election is no longer a draft.
      if (isVeiltallyError(e) && e.status === 409) return renderOpen(res, req.params.id, 409, e.message);
      throw e;
    }
    res.redirect(303, `/organise/elections/${req.params.id}`);
  });

  router.get('/organise/elections/:id/close', async (req, res) => {
    const dash = await load(res, req.params.id);
    const d = dashboardView(dash);
    if (!canCloseEarly(dash.election, dash.now)) return renderNotNow(res, d, 'Voting in this election is not open, so there is nothing to close.');
    res.render('organise/close', { title: `Close ${d.title}`, d });
  });

  router.post('/organise/elections/:id/close', async (req, res) => {
    try {
      await closeElection(ctx, { electionId: req.params.id, organiserId: organiserOf(res).id });
    } catch (e) {
      const message = stateConflictMessage(e);
      return renderNotNow(res, dashboardView(await load(res, req.params.id)), message);
    }
    res.redirect(303, `/organise/elections/${req.params.id}`);
  });

  return router;
}
