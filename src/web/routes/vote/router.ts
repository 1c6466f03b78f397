import { Router, type Response } from 'express';
import type { AppDeps } from '../../deps.ts';
import { noStore } from '../../middleware/security.ts';
import { castBallot } from '../../../elections/castBallot.ts';
import { checkCode } from '../../../elections/checkCode.ts';
import { findElection, type Election } from '../../../elections/electionRepo.ts';
import { ElectionNotFound, ElectionNotOpen } from '../../../elections/errors.ts';
import { formatReceipt, parseApprovals, tickedOptions, votingElectionView, type VoteStep, type VotingElectionView } from '../../presenters/ballot.ts';
import { MAX_OPTIONS, generateCastToken } from '../../../custody/index.ts';
import { isSecureSite } from '../../middleware/sessions.ts';
import { receiptCookie } from './receiptCookie.ts';
import { ballotForm, idParam } from './schema.ts';

/** What the member-facing error pages (views/errors/Code*.ejs, ElectionNotOpen.ejs) may use. */
export interface MemberContext {
  election: VotingElectionView;
  step: VoteStep;
  /** The code as typed, so a fixable mistake re-renders with it kept. Never logged, never in a URL. */
  code: string;
  approvals: number[];
}

/**
 * The member's three steps: code → ballot → confirm → cast. The code travels only in POST
 * bodies (hidden fields), never in a URL or the session; the receipt page is not stored.
 * Errors go to the one error handler, which finds this context in res.locals.
 */
export function voteRouter(deps: AppDeps): Router {
  const router = Router();
  const { ctx } = deps;
  // Codes carry 80 random bits (DEVELOPERS.md, "Ballot codes"), so this bounds load rather than guessing. A whole meeting may share one
  // address, so only failed steps use up the allowance: members who type their code right never do.
  const { codeAttempts } = deps.limits;

  const receipts = receiptCookie(deps.sessionSecret, isSecureSite(deps.config.publicUrl), ctx.random);

  router.use('/vote', noStore);

  /**
   * A draft's ballot link says only that voting has not opened: nothing of the draft (not even
   * its title) is shown, and the member context is not set, so no page can show it.
   */
  async function memberElection(rawId: unknown): Promise<Election> {
    const param = idParam.safeParse({ id: rawId });
    if (!param.success) throw new ElectionNotFound();
    const e = await findElection(ctx.knex, param.data.id);
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

  router.get('/vote/:id', async (req, res) => {
    const e = await memberElection(req.params.id);
    const election = remember(res, e, 'code');
    if (election.window !== 'open') throw new ElectionNotOpen(election.window === 'not-yet-open' ? 'not-yet-open' : 'closed');
    res.render('vote/start', { title: election.title, election, code: '' });
  });

  router.post('/vote/:id/ballot', codeAttempts, async (req, res) => {
    const e = await memberElection(req.params.id);
    const form = ballotForm.parse(req.body ?? {});
    // "Change my choices" comes back here with the ticks, so they are kept.
    const election = remember(res, e, form.changing === 'yes' ? 'ballot' : 'code', form.code);
    const approvals = parseApprovals(form.approve, e.options.length);
    (res.locals.member as MemberContext).approvals = approvals;
    await checkCode(ctx, { electionId: e.id, code: form.code }).catch(noteWindow(res));
    res.render('vote/ballot', { title: `Your ballot: ${election.title}`, election, code: form.code, ticked: new Set(approvals) });
  });

  router.post('/vote/:id/confirm', codeAttempts, async (req, res) => {
    const e = await memberElection(req.params.id);
    const form = ballotForm.parse(req.body ?? {});
    const election = remember(res, e, 'confirm', form.code);
    const approvals = parseApprovals(form.approve, e.options.length);
    (res.locals.member as MemberContext).approvals = approvals;
    await checkCode(ctx, { electionId: e.id, code: form.code }).catch(noteWindow(res));
    res.render('vote/confirm', {
      title: `Read back your ballot: ${election.title}`,
      election,
      code: form.code,
      approvals,
      ticked: tickedOptions(election, approvals),
      // One-time token: sending this same confirmation again returns the same receipt.
      castToken: generateCastToken(ctx.random),
    });
  });

  router.post('/vote/:id/cast', codeAttempts, async (req, res) => {
    const form = ballotForm.parse(req.body ?? {});
    const param = idParam.safeParse({ id: req.params.id });
    // The cast goes first and checks everything itself (README, Performance): the election is read
    // for the page only when the cast fails, and then as before, so every error answers the same.
    const electionId = param.success ? param.data.id.toLowerCase() : '';
    let receipt: string;
    try {
      if (!param.success) throw new ElectionNotFound();
      const approvals = parseApprovals(form.approve, MAX_OPTIONS); // castBallot holds them to the election's d
      ({ receipt } = await castBallot(ctx, { electionId, code: form.code, approvals, castToken: form.castToken }));
    } catch (err) {
      const e = await memberElection(req.params.id);
      remember(res, e, 'cast', form.code);
      (res.locals.member as MemberContext).approvals = parseApprovals(form.approve, e.options.length);
      return noteWindow(res)(err);
    }
    // Post/redirect/get: Reload and Back never resend the cast; the receipt reaches this browser only.
    receipts.set(res, electionId, receipt, ctx.now());
    res.redirect(303, receipts.path(electionId));
  });

  router.get('/vote/:id/receipt', async (req, res) => {
    const e = await memberElection(req.params.id);
    const election = votingElectionView(e, ctx.now());
    const receipt = receipts.read(req, e.id, ctx.now());
    if (!receipt) return res.status(404).render('vote/receipt-gone', { title: `No receipt to show: ${election.title}`, election });
    res.render('vote/receipt', { title: `Ballot received: ${election.title}`, election, receipt: formatReceipt(receipt) });
  });

  // A plain GET of a step (a bookmark, or a refresh after the session ended) goes back to the start.
  router.get(['/vote/:id/ballot', '/vote/:id/confirm', '/vote/:id/cast'], async (req, res) => {
    const e = await memberElection(req.params.id);
    res.redirect(303, `/vote/${e.id}`);
  });

  return router;
}
