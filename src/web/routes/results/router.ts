import { Router, type Response } from 'express';
import type { AppDeps } from '../../deps.ts';
import { noStore } from '../../middleware/security.ts';
import { listEvents } from '../../../elections/audit.ts';
import { checkReceipt } from '../../../elections/checkReceipt.ts';
import type { Election } from '../../../elections/electionRepo.ts';
import { readElection } from '../../../elections/readElection.ts';
import { loadSignedStatement } from '../../../elections/statementLinks.ts';
import { ElectionNotFound } from '../../../elections/errors.ts';
import { ReceiptMalformed } from '../../../custody/errors.ts';
import { resultPageView, type ResultPageView } from '../../presenters/result.ts';
import { idParam, receiptForm } from './schema.ts';
import { signedStatementView } from '../../presenters/signedStatement.ts';
import { announcementText, announcementView, leadSentence } from '../../presenters/announcement.ts';

/** What the receipt form shows after a check: only "counted" or "not found", never more. */
export interface ReceiptCheckView {
  receipt: string;
  outcome: 'found' | 'not-found' | 'malformed' | 'not-published';
  message: string;
}

/**
 * The public result page, no sign-in. Drafts answer like unknown elections. Before publication
 * it says so (a tallied result is the organiser's private preview).
 */
export function resultsRouter(deps: AppDeps): Router {
  const router = Router();
  const { ctx } = deps;
  // 50-bit receipts make guessing pointless; this only bounds load, and a whole meeting on one
  // network address may check its receipts at once, so the allowance is generous.
  const { receiptChecks } = deps.limits;

  async function publicElection(rawId: unknown): Promise<Election> {
    const param = idParam.safeParse({ id: rawId });
    if (!param.success) throw new ElectionNotFound();
    const e = await readElection(ctx, param.data.id);
    if (!e || e.state === 'draft') throw new ElectionNotFound();
    return e;
  }

  async function pageView(e: Election): Promise<ResultPageView> {
    return resultPageView(e, await listEvents(ctx.knex, e.id, { publicOnly: true }), ctx.now());
  }

  async function render(res: Response, page: ResultPageView, receiptCheck: ReceiptCheckView | null = null): Promise<void> {
    if (page.result) {
      const facts = await loadSignedStatement(ctx, page.id);
      const signed = facts ? signedStatementView(page.id, facts) : null;
      const readAloud = facts ? leadSentence(facts.envelope.statement) : null;
      res.render('results/result', { title: `Result: ${page.title}`, page, result: page.result, receiptCheck, signed, readAloud });
    } else {
      res.render('results/pending', { title: `Result not yet published: ${page.title}`, page, receiptCheck });
    }
  }

  /** The minutes and the plain-text announcement exist once the result is published, like the statement they are made from. */
  async function announcement(rawId: unknown) {
    const e = await publicElection(rawId);
    if (e.state !== 'published') throw new ElectionNotFound();
    const facts = await loadSignedStatement(ctx, e.id);
    if (!facts) throw new ElectionNotFound();
    return { e, view: announcementView(facts.envelope.statement, e.timeZone, deps.config.publicUrl) };
  }

  router.get('/results/:id/minutes', async (req, res) => {
    const { e, view } = await announcement(req.params.id);
    res.render('results/minutes', {
      title: `Minutes: ${view.title}`,
      a: view,
      resultsPath: `/results/${e.id}`,
      txtUrl: `/results/${e.id}/announcement.txt`,
    });
  });

  router.get('/results/:id/announcement.txt', async (req, res) => {
    const { view } = await announcement(req.params.id);
    res.type('text/plain; charset=utf-8').send(announcementText(view));
  });

  router.get('/results/:id', async (req, res) => {
    const e = await publicElection(req.params.id);
    await render(res, await pageView(e));
  });

  router.post('/results/:id/receipt', noStore, receiptChecks, async (req, res) => {
    const e = await publicElection(req.params.id);
    const page = await pageView(e);
    const { receipt } = receiptForm.parse(req.body ?? {});
    if (!page.result) {
      res.status(409);
      return await render(res, page, {
        receipt,
        outcome: 'not-published',
        message: 'Receipts can be checked here once the result is published.',
      });
    }
    let found: boolean;
    try {
      found = await checkReceipt(ctx, { electionId: e.id, receipt });
    } catch (err) {
      if (!(err instanceof ReceiptMalformed)) throw err;
      res.status(400);
      return await render(res, page, { receipt, outcome: 'malformed', message: err.message });
    }
    await render(
      res,
      page,
      found
        ? { receipt, outcome: 'found', message: 'This receipt is among the ballots counted.' }
        : { receipt, outcome: 'not-found', message: 'This receipt was not found. Check it for typing mistakes and try again.' },
    );
  });

  router.get('/results/:id/receipt', async (req, res) => {
    const e = await publicElection(req.params.id);
    res.redirect(303, `/results/${e.id}`);
  });

  return router;
}
