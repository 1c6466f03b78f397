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
import { errorsFrom, field, type FieldErrors } from './forms.ts';
import { noStore } from '../../middleware/security.ts';
import { copiedNotice } from '../../presenters/copyElection.ts';
import { readCopied } from './copySchema.ts';

/**
 * The two passphrase fields as typed, for a new election's form to show again when it comes back
 * (Add rows, Update the guidance, a refusal), so the organiser types it once. They go back only in
 * the body of the answer to the POST that carried them, never into a URL, a log line, the resume
 * box (resumeForm.ts) or an error page, and every answer of the form is no-store.
 */
function typedPassphrase(body: unknown): { passphrase: string; passphraseAgain: string } {
  const b = (body ?? {}) as Record<string, unknown>;
  return { passphrase: field(b, 'passphrase'), passphraseAgain: field(b, 'passphraseAgain') };
}

/** The elections list, the new-election form, the draft editor and the guidance refresh. */
export function electionRoutes(deps: AppDeps): Router {
  const router = Router();
  const { ctx } = deps;
  // The form may carry the tally passphrase back (typedPassphrase): no answer of it is stored by a browser or proxy.
  router.use(['/organise/elections/new', '/organise/elections/:id/edit', '/organise/elections/:id/guidance'], noStore);

  async function renderForm(
    res: Response,
    status: number,
    electionId: string | null,
    values: ElectionFormValues,
    extra: {
      errors?: FieldErrors;
      ambiguous?: string[];
      addRows?: number;
      passphrase?: { passphrase: string; passphraseAgain: string };
      copied?: ReturnType<typeof copiedNotice>;
    } = {},
  ) {
    const { copied = null, ...formExtra } = extra;
    const budget = await groupBudget(ctx, values, electionId, organiserOf(res).id);
    const stored = electionId === null ? null : (await ownedElection(ctx.knex, electionId, organiserOf(res).id, { lock: false })).rosterId;
    const rosters = await electorateChoices(ctx, { organiserId: organiserOf(res).id, currentRosterId: stored });
    const form = electionFormView({ electionId, values, maxRows: MAX_ROWS, budget, rosters, ...formExtra });
    res.status(status).render('organise/election-form', {
      title: electionId === null ? 'New election' : 'Edit the draft',
      form,
      errors: form.errors,
      electionId,
      copied,
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
    const { draft, errors, ambiguous } = draftFromValues(values, ctx.now());
    const pass = readPassphrase(req.body);
    const all = { ...errors, ...pass.errors };
    const passphrase = typedPassphrase(req.body);
    if (!draft || Object.keys(all).length > 0) return await renderForm(res, 400, null, values, { errors: all, ambiguous, passphrase });
    try {
      const { electionId } = await createElection(ctx, { organiserId: organiserOf(res).id, draft, passphrase: pass.passphrase });
      res.redirect(303, `/organise/elections/${electionId}`);
    } catch (e) {
      if (!(e instanceof InvalidInput)) throw e;
      await renderForm(res, 400, null, values, { errors: errorsFrom(e), ambiguous, passphrase });
    }
  });

  router.get('/organise/elections/:id/edit', async (req, res) => {
    const e = await ownDraft(res, req.params.id);
    await renderForm(res, 200, e.id, valuesFromElection(e, await groupNameOf(ctx, e.groupId)), { copied: copiedNotice(readCopied(req.query)) });
  });

  router.post('/organise/elections/:id/edit', async (req, res) => {
    const e = await ownDraft(res, req.params.id);
    const values = readElectionForm(req.body);
    const { draft, errors, ambiguous } = draftFromValues(values, ctx.now());
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
    await renderForm(res, 200, electionId, values, { addRows, ambiguous, passphrase: typedPassphrase(req.body) });
  });

  return router;
}
