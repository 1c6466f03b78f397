import { Router, type Response } from 'express';
import type { AppDeps } from '../../deps.ts';
import { isFirstRunOpen } from '../../../accounts/firstRun.ts';
import { findElectionIdByShortRef } from '../../../elections/shortRef.ts';
import { ElectionNotFound } from '../../../elections/errors.ts';
import { findBallotByCode, listPublishedResults } from '../../../elections/findBallotByCode.ts';
import { readElection } from '../../../elections/readElection.ts';
import { CodeMalformed, CodeTypo } from '../../../custody/errors.ts';
import { normaliseCode } from '../../../custody/index.ts';
import { memberSteps } from '../vote/stepCookie.ts';
import { noStore } from '../../middleware/security.ts';
import { lockedOut } from '../../middleware/limits.ts';
import { TooManyAttempts } from '../../errors.ts';
import { votingElectionView } from '../../presenters/ballot.ts';
import { shownTime } from '../../presenters/publicTime.ts';
import { ballotPathOf, findBallotForm } from './schema.ts';

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

  const { ctx } = deps;
  // Like the ballot steps: only failed look-ups count, so a meeting on one address is never locked out.
  const codeAttempts = deps.limits.codeLookups;
  const steps = memberSteps(deps);

  async function renderHome(res: Response, status: number, code: string, problem: string | null) {
    // Past the look-up limit a failed look-up is not answered, only "wait" (limits.ts, failures-only).
    const locked = status >= 400 ? await lockedOut(res) : null;
    if (locked) {
      res.set('Retry-After', String(Math.max(1, Math.ceil(locked.retryAfterMs / 1000))));
      throw new TooManyAttempts(locked.what, locked.retryAfterMs);
    }
    const results = (await listPublishedResults(ctx)).map((r) => ({
      url: `/results/${r.id}`,
      title: r.title,
      publishedAt: shownTime(r.publishedAt, r.timeZone),
    }));
    const newSite = await isFirstRunOpen(ctx.knex);
    res.status(status).render('site/home', { title: 'Private approval votes', code, problem, results, newSite });
  }

  router.get('/', async (_req, res) => {
    await renderHome(res, 200, '', null);
  });

  /**
   * The home page's box: a pasted ballot link goes to that ballot; a code is looked up among the
   * open elections and the member lands on that ballot's ballot page, the code kept in the sealed
   * step cookie (never in a URL or a page). A failure re-renders the box (no-store) with what was typed.
   */
  router.post('/ballot', noStore, codeAttempts, async (req, res) => {
    const { code } = findBallotForm.parse(req.body ?? {});
    const path = ballotPathOf(code);
    if (path) return res.redirect(303, path);
    let id: string | null;
    try {
      id = await findBallotByCode(ctx, { code });
    } catch (e) {
      if (e instanceof CodeMalformed || e instanceof CodeTypo) return renderHome(res, 400, code, e.message);
      throw e;
    }
    const e = id ? await readElection(ctx, id) : null;
    if (!e) {
      return renderHome(
        res,
        404,
        code,
        'No open ballot has this code. Check it against your slip, or use the link your organiser sent you. If voting has not opened yet or has closed, the link tells you when.',
      );
    }
    const election = votingElectionView(e, ctx.now());
    if (election.window !== 'open') return res.redirect(303, election.voteUrl); // says when voting opens
    // The same hand-over as the ballot's own code step: the code goes into the sealed step cookie and
    // the member lands on the ballot by a GET, which names the election so they can check it.
    steps.set(res, e.id, { step: 'ballot', code: normaliseCode(code), approvals: [], found: true });
    res.redirect(303, `${election.voteUrl}/ballot`);
  });

  /** The short ballot address printed on slips: /v/7k3m9q2x leads to the election's ballot page. */
  router.get('/v/:ref', async (req, res) => {
    const id = await findElectionIdByShortRef(deps.ctx.knex, String(req.params.ref));
    if (!id) throw new ElectionNotFound();
    res.redirect(303, `/vote/${id}`);
  });

  return router;
}
