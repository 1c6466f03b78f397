import { Router, type Response } from 'express';
import { correctWording, wordingScope } from '../../../elections/correctWording.ts';
import { loadDashboard } from '../../../elections/dashboard.ts';
import { deleteDraft } from '../../../elections/deleteDraft.ts';
import { extendClosing } from '../../../elections/extendClosing.ts';
import { electionOrganisers, shareElection, unshareElection } from '../../../elections/shareElection.ts';
import { utcToWallClockText, zonedToUtc } from '../../../elections/time.ts';
import { InvalidInput } from '../../../errors.ts';
import type { AppDeps } from '../../deps.ts';
import { dashboardView } from '../../presenters/dashboard.ts';
import { organiserOf } from './auth.ts';
import { readClosing, readOrganiserId, readShareEmail, readWording } from './basicsSchema.ts';
import { errorsFrom, summaryOf, type FieldErrors } from './forms.ts';
import { renderNotNow, stateConflictMessage } from './notNow.ts';

/**
 * The organiser basics on one election: delete a draft, move the closing time later, correct
 * the wording, share with another organiser. Each has a page with a form (CSRF token), a
 * use-case with one transaction and an audit entry, and a plain answer when the state forbids it.
 */
export function basicsRoutes(deps: AppDeps): Router {
  const router = Router();
  const { ctx } = deps;
  const load = (res: Response, id: string) => loadDashboard(ctx, { electionId: id, organiserId: organiserOf(res).id });
  const base = (id: string) => `/organise/elections/${id}`;

  /** Re-renders a form after a refusal: bad input keeps what was typed, a state conflict explains itself. */
  async function refused(res: Response, id: string, e: unknown, again: (errors: FieldErrors) => Promise<void>) {
    if (e instanceof InvalidInput) {
      res.status(400);
      return again(errorsFrom(e));
    }
    return renderNotNow(res, dashboardView(await load(res, id)), stateConflictMessage(e));
  }

  // Delete a draft
  router.get('/organise/elections/:id/delete', async (req, res) => {
    const dash = await load(res, req.params.id);
    const d = dashboardView(dash);
    if (dash.election.state !== 'draft')
      return renderNotNow(res, d, 'Only a draft can be deleted. This election has been opened, so it stays on record.');
    res.render('organise/delete', { title: `Delete ${d.title}`, d });
  });

  router.post('/organise/elections/:id/delete', async (req, res) => {
    try {
      await deleteDraft(ctx, { electionId: req.params.id, organiserId: organiserOf(res).id });
    } catch (e) {
      return renderNotNow(res, dashboardView(await load(res, req.params.id)), stateConflictMessage(e));
    }
    res.redirect(303, '/organise?deleted=1');
  });

  // Move the closing time later
  async function renderClosing(res: Response, id: string, value: string | null, errors: FieldErrors = {}) {
    const dash = await load(res, id);
    const d = dashboardView(dash);
    if (!(dash.election.state === 'open' && dash.now < dash.election.closesAt)) {
      return renderNotNow(res, d, 'The closing time can only be moved while voting is open or scheduled.');
    }
    res.render('organise/closing', {
      title: `Closing time of ${d.title}`,
      d,
      value: value ?? utcToWallClockText(dash.election.closesAt, dash.election.timeZone),
      errors,
      summary: summaryOf(errors),
    });
  }

  router.get('/organise/elections/:id/closing', async (req, res) => {
    await renderClosing(res, req.params.id, null);
  });

  router.post('/organise/elections/:id/closing', async (req, res) => {
    const id = req.params.id;
    const { closesAt } = readClosing(req.body);
    const dash = await load(res, id);
    const parsed = zonedToUtc(closesAt, dash.election.timeZone);
    if (!parsed.ok) return res.status(400) && renderClosing(res, id, closesAt, { closesAt: parsed.message });
    try {
      await extendClosing(ctx, { electionId: id, organiserId: organiserOf(res).id, closesAt: parsed.utc });
    } catch (e) {
      return refused(res, id, e, (errors) => renderClosing(res, id, closesAt, errors));
    }
    res.redirect(303, base(id));
  });

  // Correct the wording
  async function renderWording(
    res: Response,
    id: string,
    values: { title: string; description: string; optionDescriptions: string[] } | null,
    errors: FieldErrors = {},
  ) {
    const dash = await load(res, id);
    const d = dashboardView(dash);
    const e = dash.election;
    if (e.state === 'draft') return res.redirect(303, `${base(id)}/edit`);
    const scope = wordingScope(e, dash.now);
    if (!scope) return renderNotNow(res, d, 'Voting has ended, so the wording of this election can no longer change.');
    const v = values ?? { title: e.title, description: e.description, optionDescriptions: e.options.map((o) => o.description) };
    res.render('organise/wording', {
      title: `Correct the wording of ${d.title}`,
      d,
      scope,
      values: v,
      options: e.options.map((o, i) => ({ label: o.label, description: v.optionDescriptions[i] ?? '' })),
      errors,
      summary: summaryOf(errors, (k) => k.replace(/^optionDescriptions\.(\d+)$/, 'optionDescription-$1')),
    });
  }

  router.get('/organise/elections/:id/wording', async (req, res) => {
    await renderWording(res, req.params.id, null);
  });

  router.post('/organise/elections/:id/wording', async (req, res) => {
    const id = req.params.id;
    const dash = await load(res, id);
    const wording = readWording(req.body, dash.election.options.length);
    try {
      await correctWording(ctx, { electionId: id, organiserId: organiserOf(res).id, wording });
    } catch (e) {
      return refused(res, id, e, (errors) => renderWording(res, id, wording, errors));
    }
    res.redirect(303, base(id));
  });

  // Share with another organiser
  async function renderSharing(res: Response, id: string, email: string, errors: FieldErrors = {}, shared: string | null = null) {
    const dash = await load(res, id);
    res.render('organise/sharing', {
      title: `Organisers of ${dash.election.title}`,
      d: dashboardView(dash),
      organisers: await electionOrganisers(ctx.knex, dash.election.id),
      me: organiserOf(res),
      email,
      errors,
      summary: summaryOf(errors),
      shared,
    });
  }

  router.get('/organise/elections/:id/sharing', async (req, res) => {
    await renderSharing(res, req.params.id, '', {}, req.query.shared === '1' ? 'added' : req.query.shared === '0' ? 'removed' : null);
  });

  router.post('/organise/elections/:id/sharing', async (req, res) => {
    const id = req.params.id;
    const email = readShareEmail(req.body);
    try {
      await shareElection(ctx, { electionId: id, organiserId: organiserOf(res).id, email });
    } catch (e) {
      return refused(res, id, e, (errors) => renderSharing(res, id, email, errors));
    }
    res.redirect(303, `${base(id)}/sharing?shared=1`);
  });

  router.post('/organise/elections/:id/sharing/remove', async (req, res) => {
    const id = req.params.id;
    await unshareElection(ctx, { electionId: id, organiserId: organiserOf(res).id, withOrganiserId: readOrganiserId(req.body) });
    // Someone who took themselves off no longer sees the election.
    const self = readOrganiserId(req.body) === organiserOf(res).id;
    res.redirect(303, self ? '/organise' : `${base(id)}/sharing?shared=0`);
  });

  return router;
}
