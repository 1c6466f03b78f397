import { Router, type Response } from 'express';
import type { AppDeps } from '../../deps.ts';
import { noStore } from '../../middleware/security.ts';
import { castBallot } from '../../../elections/castBallot.ts';
import { checkCode } from '../../../elections/checkCode.ts';
import type { Election } from '../../../elections/electionRepo.ts';
import { readElection } from '../../../elections/readElection.ts';
import { requestReplacement } from '../../../elections/replacements.ts';
import { InvalidInput } from '../../../errors.ts';
import { CodeAlreadySpent, CodeRevoked, ElectionNotFound, ElectionNotOpen } from '../../../elections/errors.ts';
import { formatReceipt, parseApprovals, tickedOptions, votingElectionView, type VoteStep, type VotingElectionView } from '../../presenters/ballot.ts';
import { generateCastToken, normaliseCode } from '../../../custody/index.ts';
import { isSecureSite } from '../../middleware/sessions.ts';
import { VoteStepLapsed } from '../../errors.ts';
import { RECEIPT_COOKIE_MS, receiptCookie } from './receiptCookie.ts';
import { memberSteps, readBackTag } from './stepCookie.ts';
import { castForm, codeForm, idParam, ticksForm } from './schema.ts';

/** How long this browser can show a receipt again after casting, as the receipt pages say. */
const RECEIPT_MINUTES = RECEIPT_COOKIE_MS / 60_000;

/** What the member-facing error pages (views/errors/Code*.ejs, ElectionNotOpen.ejs) may use. */
export interface MemberContext {
  election: VotingElectionView;
  step: VoteStep;
  /** The code as typed at the code step, so a fixable mistake re-renders with it kept. Empty at every later step. */
  code: string;
  approvals: number[];
}

/**
 * The member's steps: code → ballot → confirm → cast → receipt. Every step's POST answers with a
 * 303 to the GET of the next page (post/redirect/get), so Back and Reload never resend a form.
 * Between steps the code, the ticks and the cast token live only in the sealed step cookie
 * (stepCookie.ts); the code is typed once and never appears in a page, a URL or the session again.
 * Errors go to the one error handler, which finds this context in res.locals.
 */
export function voteRouter(deps: AppDeps): Router {
  const router = Router();
  const { ctx } = deps;
  // Codes carry 80 random bits (DEVELOPERS.md, "Ballot codes"), so this bounds load rather than guessing. A whole meeting may share one
  // address, so only failed steps use up the allowance: members who type their code right never do.
  const { codeAttempts, replacementRequests } = deps.limits;

  const receipts = receiptCookie(deps.sessionSecret, isSecureSite(deps.config.publicUrl), ctx.random);
  const steps = memberSteps(deps);

  router.use('/vote', noStore);

  /**
   * A draft's ballot link says only that voting has not opened: nothing of the draft (not even
   * its title) is shown, and the member context is not set, so no page can show it.
   */
  async function memberElection(rawId: unknown): Promise<Election> {
    const param = idParam.safeParse({ id: rawId });
    if (!param.success) throw new ElectionNotFound();
    const e = await readElection(ctx, param.data.id);
    if (!e) throw new ElectionNotFound();
    if (e.state === 'draft') throw new ElectionNotOpen('draft');
    return e;
  }

  function remember(res: Response, e: Election, step: VoteStep, code = '', approvals: number[] = []): VotingElectionView {
    const election = votingElectionView(e, ctx.now());
    const member: MemberContext = { election, step, code, approvals };
    res.locals.member = member;
    return election;
  }

  /** The steps after the code check only need voting to be open now: the code was checked when typed. */
  function assertOpen(election: VotingElectionView): void {
    if (election.window !== 'open') throw new ElectionNotOpen(election.window === 'not-yet-open' ? 'not-yet-open' : 'closed');
  }

  /** A use-case's ElectionNotOpen knows best whether voting has not started or has ended. */
  function noteWindow(res: Response) {
    return (err: unknown): never => {
      const member = res.locals.member as MemberContext | undefined;
      if (err instanceof ElectionNotOpen && member && err.reason !== 'draft') {
        member.election.window = err.reason === 'not-yet-open' ? 'not-yet-open' : 'closed';
      }
      throw err;
    };
  }

  function alreadyCast(res: Response, election: VotingElectionView) {
    res.render('vote/already-cast', { title: `Ballot already cast: ${election.title}`, election, receiptMinutes: RECEIPT_MINUTES });
  }

  router.get('/vote/:id', async (req, res) => {
    const e = await memberElection(req.params.id);
    const election = remember(res, e, 'code');
    assertOpen(election);
    const state = steps.read(req, e.id);
    res.render('vote/start', { title: election.title, election, code: '', ticksKept: state?.step === 'ticks' });
  });

  /**
   * "Lost your code?" (roster elections): the same 200 page for every well-formed address, on the
   * roster or not, granted or capped; the use-case says nothing back. Counted per client and per
   * election before any work, in the database. A malformed address is told so, with the form.
   */
  router.post('/vote/:id/replacement', replacementRequests, async (req, res) => {
    const e = await memberElection(req.params.id);
    const election = remember(res, e, 'code');
    assertOpen(election);
    const email = (req.body as Record<string, unknown> | undefined)?.email;
    try {
      await requestReplacement(ctx, { electionId: e.id, email });
    } catch (err) {
      if (!(err instanceof InvalidInput) || !election.roster) return noteWindow(res)(err);
      const typed = typeof email === 'string' ? email.slice(0, 254) : '';
      return res
        .status(400)
        .render('vote/start', { title: election.title, election, code: '', ticksKept: false, lostCode: { email: typed, error: err.message } });
    }
    res.render('vote/replacement-sent', { title: `Check your email: ${election.title}`, election });
  });

  router.post('/vote/:id/ballot', codeAttempts, async (req, res) => {
    const e = await memberElection(req.params.id);
    const { code } = codeForm.parse(req.body ?? {});
    const state = steps.read(req, e.id);
    // Ticks sent after the step cookie lapsed wait for the code: typed again, it leads straight to the read-back.
    const kept = state?.step === 'ticks' ? state.approvals : null;
    remember(res, e, kept ? 'ballot' : 'code', code, kept ?? []);
    await checkCode(ctx, { electionId: e.id, code }).catch(noteWindow(res));
    const canonical = normaliseCode(code);
    if (kept) {
      steps.set(res, e.id, { step: 'confirm', code: canonical, approvals: kept, token: generateCastToken(ctx.random) });
      return res.redirect(303, `/vote/${e.id}/confirm`);
    }
    steps.set(res, e.id, { step: 'ballot', code: canonical, approvals: [] });
    res.redirect(303, `/vote/${e.id}/ballot`);
  });

  router.get('/vote/:id/ballot', async (req, res) => {
    const e = await memberElection(req.params.id);
    const state = steps.read(req, e.id);
    if (!state || state.step === 'ticks') return res.redirect(303, `/vote/${e.id}`);
    const election = remember(res, e, 'ballot', '', state.step === 'cast' ? [] : state.approvals);
    if (state.step === 'cast') return alreadyCast(res, election);
    assertOpen(election);
    res.render('vote/ballot', {
      title: `Your ballot: ${election.title}`,
      election,
      ticked: new Set(state.approvals),
      found: state.step === 'ballot' && state.found === true,
    });
  });

  router.post('/vote/:id/confirm', codeAttempts, async (req, res) => {
    const e = await memberElection(req.params.id);
    const form = ticksForm.parse(req.body ?? {});
    const election = remember(res, e, 'confirm');
    const approvals = parseApprovals(form.approve, e.options.length);
    (res.locals.member as MemberContext).approvals = approvals;
    const state = steps.read(req, e.id);
    if (state?.step === 'cast') return res.redirect(303, `/vote/${e.id}/confirm`);
    if (!state || state.step === 'ticks') {
      // The cookie lapsed while the ballot was open: keep the ticks, ask for the code again.
      steps.set(res, e.id, { step: 'ticks', approvals });
      return res.redirect(303, `/vote/${e.id}`);
    }
    assertOpen(election);
    // One cast token per read-back: the same ticks keep it (so a cast whose answer was lost, sent
    // again, finds its receipt); changed ticks get a new one.
    const same = state.step === 'confirm' && state.approvals.join() === approvals.join();
    const token = same ? state.token : generateCastToken(ctx.random);
    steps.set(res, e.id, { step: 'confirm', code: state.code, approvals, token });
    res.redirect(303, `/vote/${e.id}/confirm`);
  });

  router.get('/vote/:id/confirm', async (req, res) => {
    const e = await memberElection(req.params.id);
    const state = steps.read(req, e.id);
    if (!state || state.step === 'ticks') return res.redirect(303, `/vote/${e.id}`);
    if (state.step === 'ballot') return res.redirect(303, `/vote/${e.id}/ballot`);
    const election = remember(res, e, 'confirm', '', state.step === 'cast' ? [] : state.approvals);
    if (state.step === 'cast') return alreadyCast(res, election);
    assertOpen(election);
    res.render('vote/confirm', {
      title: `Read back your ballot: ${election.title}`,
      election,
      ticked: tickedOptions(election, state.approvals),
      readBack: readBackTag(state.token),
    });
  });

  router.post('/vote/:id/cast', codeAttempts, async (req, res) => {
    // The cast goes first when this browser's step cookie holds a read-back ready to cast (README,
    // Performance): castBallot checks everything itself, so a successful cast is one database statement.
    // Any failure goes the whole way below, which reads the election and answers exactly as before.
    const param = idParam.safeParse({ id: req.params.id });
    const early = castForm.safeParse(req.body ?? {});
    const id = param.success && early.success ? param.data.id.toLowerCase() : null;
    const ready = id ? steps.read(req, id) : null;
    if (id && early.success && ready?.step === 'confirm' && early.data.readBack === readBackTag(ready.token)) {
      const cast = await castBallot(ctx, { electionId: id, code: ready.code, approvals: ready.approvals, castToken: ready.token }).catch(() => null);
      if (cast) {
        steps.set(res, id, { step: 'cast' });
        receipts.set(res, id, cast.receipt, ctx.now());
        return res.redirect(303, receipts.path(id));
      }
    }
    const e = await memberElection(req.params.id);
    const form = castForm.parse(req.body ?? {});
    const state = steps.read(req, e.id);
    // Cast already: the same answer as the first time, the receipt page (never a second ballot).
    if (state?.step === 'cast') return res.redirect(303, receipts.path(e.id));
    remember(res, e, 'cast');
    if (!state) throw new VoteStepLapsed();
    // Cast exactly what this page read back: from another page (an older tab), read back again first.
    if (state.step !== 'confirm' || form.readBack !== readBackTag(state.token)) return res.redirect(303, `/vote/${e.id}/confirm`);
    (res.locals.member as MemberContext).approvals = state.approvals;
    const { receipt } = await castBallot(ctx, { electionId: e.id, code: state.code, approvals: state.approvals, castToken: state.token }).catch(
      (err: unknown) => {
        // A used or withdrawn code can cast nothing more from this browser: forget it.
        if (err instanceof CodeAlreadySpent || err instanceof CodeRevoked) steps.clear(res, e.id);
        return noteWindow(res)(err);
      },
    );
    // Post/redirect/get: Reload and Back never resend the cast; the receipt reaches this browser only.
    // The step cookie keeps no code, ticks or token from here on: Back to a step says "already cast".
    steps.set(res, e.id, { step: 'cast' });
    receipts.set(res, e.id, receipt, ctx.now());
    res.redirect(303, receipts.path(e.id));
  });

  router.get('/vote/:id/receipt', async (req, res) => {
    const e = await memberElection(req.params.id);
    const election = votingElectionView(e, ctx.now());
    const receipt = receipts.read(req, e.id, ctx.now());
    if (!receipt) return res.status(404).render('vote/receipt-gone', { title: `No receipt to show: ${election.title}`, election });
    res.render('vote/receipt', {
      title: `Your ballot has been received: ${election.title}`,
      election,
      receipt: formatReceipt(receipt),
      receiptMinutes: RECEIPT_MINUTES,
    });
  });

  // The cast is only ever a POST; a GET of it (a bookmark) goes to the read-back, which knows where the member is.
  router.get('/vote/:id/cast', async (req, res) => {
    const e = await memberElection(req.params.id);
    res.redirect(303, `/vote/${e.id}/confirm`);
  });

  return router;
}
