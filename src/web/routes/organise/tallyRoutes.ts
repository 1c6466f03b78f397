import { Router, type Response } from 'express';
import { WrongPassphrase } from '../../../custody/index.ts';
import { closeAndTally } from '../../../elections/closeAndTally.ts';
import { loadDashboard } from '../../../elections/dashboard.ts';
import { AlreadyTallied, ElectionStillOpen } from '../../../elections/errors.ts';
import { publishResult } from '../../../elections/publishResult.ts';
import { canTally } from '../../../elections/status.ts';
import type { PrivacyStatement } from '../../../mechanism/index.ts';
import type { AppDeps } from '../../deps.ts';
import { dashboardView, type DashboardView } from '../../presenters/dashboard.ts';
import { storedStatement, tallyPreview } from '../../presenters/tallyResult.ts';
import { organiserOf } from './auth.ts';
import { confirmed, tallyPassphraseField } from './lifecycleSchema.ts';
import { renderNotNow, stateConflictMessage } from './notNow.ts';

/** Unlocking the tally (passphrase → one draw → preview) and publishing, with a final confirmation. */
export function tallyRoutes(deps: AppDeps): Router {
  const router = Router();
  const { ctx } = deps;
  // Each try runs Argon2id over the wrapped key; wrong passphrases are limited per address (our choice: 10 per quarter hour).
  const { passphraseAttempts } = deps.limits;
  const load = (res: Response, id: string) => loadDashboard(ctx, { electionId: id, organiserId: organiserOf(res).id });

  const renderPreview = (res: Response, d: DashboardView, statement: PrivacyStatement, justDrawn: boolean) =>
    res.render('organise/tally-preview', { title: `Result of ${d.title}`, d, preview: tallyPreview(statement), justDrawn });
  const renderForm = (res: Response, d: DashboardView, status: number, problem: string | null) =>
    res.status(status).render('organise/tally', { title: `Unlock the tally of ${d.title}`, d, problem, ready: d.can.tally });

  router.get('/organise/elections/:id/tally', async (req, res) => {
    const dash = await load(res, req.params.id);
    const d = dashboardView(dash);
    const statement = storedStatement(dash.election);
    if (statement) return renderPreview(res, d, statement, false);
    renderForm(res, d, canTally(dash.election, dash.now) ? 200 : 409, null);
  });

  router.post('/organise/elections/:id/tally', passphraseAttempts, async (req, res) => {
    const dash = await load(res, String(req.params.id));
    const d = dashboardView(dash);
    if (storedStatement(dash.election)) return res.redirect(303, `/organise/elections/${d.id}/tally`);
    const passphrase = tallyPassphraseField.safeParse(typeof req.body?.passphrase === 'string' ? req.body.passphrase : '');
    if (!passphrase.success) return renderForm(res, d, 400, passphrase.error.issues[0]!.message);
    try {
      const { statement } = await closeAndTally(ctx, { electionId: d.id, organiserId: organiserOf(res).id, passphrase: passphrase.data });
      renderPreview(res, dashboardView(await load(res, d.id)), statement, true);
    } catch (e) {
      if (e instanceof WrongPassphrase) return renderForm(res, d, 403, e.message);
      if (e instanceof ElectionStillOpen) return renderForm(res, d, 409, e.message);
      if (e instanceof AlreadyTallied) return res.redirect(303, `/organise/elections/${d.id}/tally`);
      throw e;
    }
  });

  async function renderPublish(res: Response, id: string, status: number, problem: string | null) {
    const dash = await load(res, id);
    const statement = storedStatement(dash.election);
    const d = dashboardView(dash);
    if (dash.election.state !== 'tallied' || !statement) {
      return renderNotNow(res, d, dash.election.state === 'published' ? 'This result has already been published.' : 'There is no drawn result to publish yet.');
    }
    res.status(status).render('organise/publish', { title: `Publish ${d.title}`, d, preview: tallyPreview(statement), problem, retentionDays: dash.election.retentionDays });
  }

  router.get('/organise/elections/:id/publish', async (req, res) => {
    await renderPublish(res, req.params.id, 200, null);
  });

  router.post('/organise/elections/:id/publish', async (req, res) => {
    if (!confirmed(req.body)) return renderPublish(res, req.params.id, 400, 'Tick the box to confirm that publishing is final.');
    try {
      await publishResult(ctx, { electionId: req.params.id, organiserId: organiserOf(res).id });
    } catch (e) {
      const message = stateConflictMessage(e);
      return renderNotNow(res, dashboardView(await load(res, req.params.id)), message);
    }
    res.redirect(303, `/organise/elections/${req.params.id}`);
  });

  return router;
}
