import { Router, type Response } from 'express';
import { createElection } from '../../../elections/createElection.ts';
import { ownedElection } from '../../../elections/electionAccess.ts';
import { ElectionLocked } from '../../../elections/errors.ts';
import { listElections } from '../../../elections/listElections.ts';
import { isEditable } from '../../../elections/status.ts';
import { updateDraft } from '../../../elections/updateDraft.ts';
import { InvalidInput } from '../../../errors.ts';
import { electorateChoices } from '../../../rosters/rosterPages.ts';
import type { AppDeps } from '../../deps.ts';
import { electionListView } from '../../presenters/electionList.ts';
import { blankValues, electionFormView, valuesFromElection } from '../../presenters/electionForm.ts';
import { organiserOf } from './auth.ts';
import { groupBudget } from './groupBudget.ts';
import { groupNameOf } from '../../../elections/ledger.ts';
import { draftFromValues, intentSchema, MAX_ROWS, readElectionForm, readPassphrase, type ElectionFormValues } from './electionSchema.ts';
import { errorsFrom, type FieldErrors } from './forms.ts';

/** Whether either passphrase field held something when the form was sent (the form never echoes it back). */
function typedPassphrase(body: unknown): boolean {
  const b = (body ?? {}) as Record<string, unknown>;
  return [b.passphrase, b.passphraseAgain].some((v) => typeof v === 'string' && v !== '');
}

/** The elections list, the new-election form, the draft editor and the guidance refresh. */
export function electionRoutes(deps: AppDeps): Router {
  const router = Router();
  const { ctx } = deps;

  async function renderForm(
    res: Response,
    status: number,
    electionId: string | null,
    values: ElectionFormValues,
    extra: { errors?: FieldErrors; ambiguous?: string[]; addRows?: number; passphraseCleared?: boolean } = {},
  ) {
    const budget = await groupBudget(ctx, values, electionId, organiserOf(res).id);
    const stored = electionId === null ? null : (await ownedElection(ctx.knex, electionId, organiserOf(res).id, { lock: false })).rosterId;
    const rosters = await electorateChoices(ctx, { organiserId: organiserOf(res).id, currentRosterId: stored });
    const form = electionFormView({ electionId, values, maxRows: MAX_ROWS, budget, rosters, ...extra });
    res.status(status).render('organise/election-form', {
      title: electionId === null ? 'New election' : 'Edit the draft',
      form,
      errors: form.errors,
      electionId,
    });
  }

  /** The organiser's own draft; anything else is 404 (not theirs) or ElectionLocked (opened). */
  async function ownDraft(res: Response, id: string) {
    const e = await ownedElection(ctx.knex, id, organiserOf(res).id, { lock: false });
    res.locals.electionId = e.id; // for the ElectionLocked page's link back
    if (!isEditable(e)) throw new ElectionLocked();
    return e;
  }

  router.get('/organise', async (req, res) => {
    const rows = await listElections(ctx, { organiserId: organiserOf(res).id });
    res.render('organise/elections', { title: 'Your elections', deleted: req.query.deleted === '1', ...electionListView(rows, ctx.now()) });
  });

  router.get('/organise/elections/new', async (_req, res) => {
    // The zone of the organiser's latest election, else UTC: most organisers always use one zone.
    const [latest] = await listElections(ctx, { organiserId: organiserOf(res).id });
    await renderForm(res, 200, null, blankValues(ctx.now(), latest?.timeZone ?? 'UTC'));
  });

  router.post('/organise/elections/new', async (req, res) => {
    const values = readElectionForm(req.body);
    const { draft, errors, ambiguous } = draftFromValues(values);
    const pass = readPassphrase(req.body);
    const all = { ...errors, ...pass.errors };
    const passphraseCleared = typedPassphrase(req.body);
    if (!draft || Object.keys(all).length > 0) return await renderForm(res, 400, null, values, { errors: all, ambiguous, passphraseCleared });
    try {
      const { electionId } = await createElection(ctx, { organiserId: organiserOf(res).id, draft, passphrase: pass.passphrase });
      res.redirect(303, `/organise/elections/${electionId}`);
    } catch (e) {
      if (!(e instanceof InvalidInput)) throw e;
      await renderForm(res, 400, null, values, { errors: errorsFrom(e), ambiguous, passphraseCleared });
    }
  });

  router.get('/organise/elections/:id/edit', async (req, res) => {
    const e = await ownDraft(res, req.params.id);
    await renderForm(res, 200, e.id, valuesFromElection(e, await groupNameOf(ctx, e.groupId)));
  });

  router.post('/organise/elections/:id/edit', async (req, res) => {
    const e = await ownDraft(res, req.params.id);
    const values = readElectionForm(req.body);
    const { draft, errors, ambiguous } = draftFromValues(values);
    if (!draft) return await renderForm(res, 400, e.id, values, { errors, ambiguous });
    try {
      await updateDraft(ctx, { electionId: e.id, organiserId: organiserOf(res).id, draft });
      res.redirect(303, `/organise/elections/${e.id}`);
    } catch (err) {
      if (!(err instanceof InvalidInput)) throw err;
      await renderForm(res, 400, e.id, values, { errors: errorsFrom(err), ambiguous });
    }
  });

  /** Re-renders the form with fresh ε guidance or more option rows; changes nothing stored. */
  router.post('/organise/elections/:id/guidance', async (req, res) => {
    const electionId = req.params.id === 'new' ? null : (await ownDraft(res, req.params.id)).id;
    const values = readElectionForm(req.body);
    const intent = intentSchema.parse(req.body?.intent);
    const addRows = intent === 'more-rows-5' ? 5 : intent === 'more-rows-25' ? 25 : 0;
    const { ambiguous } = draftFromValues(values);
    await renderForm(res, 200, electionId, values, { addRows, ambiguous, passphraseCleared: typedPassphrase(req.body) });
  });

  return router;
}
