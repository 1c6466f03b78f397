import { Router, type Response } from 'express';
import { WrongPassphrase } from '../../../custody/index.ts';
import { queueTally, runQueuedTally } from '../../../elections/closeAndTally.ts';
import { loadDashboard, type Dashboard } from '../../../elections/dashboard.ts';
import { AlreadyTallied, ElectionStillOpen, TallyInProgress } from '../../../elections/errors.ts';
import { isVeiltallyError } from '../../../errors.ts';
import { publishResult } from '../../../elections/publishResult.ts';
import { canTally } from '../../../elections/status.ts';
import type { PrivacyStatement } from '../../../mechanism/index.ts';
import type { AppDeps } from '../../deps.ts';
import { dashboardView, type DashboardView } from '../../presenters/dashboard.ts';
import { storedStatement, tallyPreview } from '../../presenters/tallyResult.ts';
import { organiserOf } from './auth.ts';
import { confirmed, tallyPassphraseField } from './lifecycleSchema.ts';
import { renderNotNow, stateConflictMessage } from './notNow.ts';

/** How often the "drawing…" page reloads itself (a meta refresh: the CSP allows no inline script). */
export const DRAWING_REFRESH_SECONDS = 10;

/** What the organiser reads when the last queued tally stopped, by error code; never a count. */
function failureMessage(e: Dashboard['election']): string | null {
  if (e.tallyFailure === 'BallotUnreadable') {
    return 'The last attempt stopped because some sealed ballots could not be opened with this election’s key, so nothing was drawn. Ask the operator to check the database before trying again.';
  }
  if (e.tallyFailure === 'TallyInterrupted')
    return 'The last attempt to draw the result did not finish (the server stopped while counting), so nothing was drawn. Enter the passphrase to try again.';
  if (e.tallyFailure) return 'The last attempt to draw the result stopped before the end, so nothing was drawn. Enter the passphrase to try again.';
  if (e.tallyStartedAt && e.state === 'closed')
    return 'The last attempt to draw the result did not finish (the server may have restarted), so nothing was drawn. Enter the passphrase to try again.';
  return null;
}

/**
 * Unlocking the tally and publishing, with a final confirmation. Unlocking checks the passphrase
 * and queues the tally; the count and the one draw run in this process, off the request, and
 * the organiser sees "drawing…" (refreshing itself) and then the preview.
 */
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
    if (dash.status === 'drawing') {
      res.set('Cache-Control', 'no-store');
      // The HTTP Refresh header rather than a meta element: the page says it checks again, offers a
      // link to check now, and the page itself carries no timed markup (axe's meta-refresh rule, WCAG 2.2.1).
      res.set('Refresh', String(DRAWING_REFRESH_SECONDS));
      return res.render('organise/tally-drawing', { title: `Drawing the result of ${d.title}`, d, refreshSeconds: DRAWING_REFRESH_SECONDS });
    }
    const statement = storedStatement(dash.election);
    if (statement) return renderPreview(res, d, statement, false);
    const ready = canTally(dash.election, dash.now);
    renderForm(res, d, ready ? 200 : 409, ready ? failureMessage(dash.election) : null);
  });

  router.post('/organise/elections/:id/tally', passphraseAttempts, async (req, res) => {
    const dash = await load(res, String(req.params.id));
    const d = dashboardView(dash);
    const again = `/organise/elections/${d.id}/tally`;
    if (storedStatement(dash.election) || dash.status === 'drawing') return res.redirect(303, again);
    const passphrase = tallyPassphraseField.safeParse(typeof req.body?.passphrase === 'string' ? req.body.passphrase : '');
    if (!passphrase.success) return renderForm(res, d, 400, passphrase.error.issues[0]!.message);
    let queued;
    try {
      queued = await queueTally(ctx, {
        electionId: d.id,
        organiserId: organiserOf(res).id,
        passphrase: passphrase.data,
        previewMs: deps.config.previewMs,
      });
    } catch (e) {
      if (e instanceof WrongPassphrase) return renderForm(res, d, 403, e.message);
      if (e instanceof ElectionStillOpen) return renderForm(res, d, 409, e.message);
      if (e instanceof AlreadyTallied || e instanceof TallyInProgress) return res.redirect(303, again);
      throw e;
    }
    // Off the request path. Only unexpected failures are logged, and never with a duration;
    // the organiser learns of any failure on the tally page (failureMessage).
    setImmediate(() => {
      runQueuedTally(ctx, queued).catch((err: unknown) => {
        if (!isVeiltallyError(err)) deps.logger.error({ err: { name: (err as Error)?.name, message: (err as Error)?.message } }, 'tally failed');
      });
    });
    res.redirect(303, again);
  });

  async function renderPublish(res: Response, id: string, status: number, problem: string | null) {
    const dash = await load(res, id);
    const statement = storedStatement(dash.election);
    const d = dashboardView(dash);
    // Back or Reload on this page after publishing: the election's page says it is published.
    if (dash.election.state === 'published') return res.redirect(303, `/organise/elections/${d.id}`);
    if (dash.status !== 'tallied' || !statement) return renderNotNow(res, d, 'There is no drawn result to publish yet.');
    res.status(status).render('organise/publish', {
      title: `Publish ${d.title}`,
      d,
      preview: tallyPreview(statement),
      problem,
      retentionDays: dash.election.retentionDays,
    });
  }

  router.get('/organise/elections/:id/publish', async (req, res) => {
    await renderPublish(res, req.params.id, 200, null);
  });

  router.post('/organise/elections/:id/publish', async (req, res) => {
    const dash = await load(res, req.params.id);
    if (dash.status === 'drawing') return renderNotNow(res, dashboardView(dash), 'There is no drawn result to publish yet.');
    if (!confirmed(req.body)) return renderPublish(res, req.params.id, 400, 'Tick the box to confirm that publishing is final.');
    if (dash.election.state === 'published') return res.redirect(303, `/organise/elections/${req.params.id}`);
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
