import { Router, type Response } from 'express';
import { cancelNotice, mailPage, resendFailed, scheduleNotice } from '../../../elections/mailings.ts';
import { InvalidInput, isVeiltallyError } from '../../../errors.ts';
import type { AppDeps } from '../../deps.ts';
import { noStore } from '../../middleware/security.ts';
import { mailPageView } from '../../presenters/mail.ts';
import { organiserOf } from './auth.ts';
import { errorsFrom, summaryOf, type FieldErrors } from './forms.ts';
import { mailingIdField, readNotice } from './mailSchema.ts';

/**
 * A roster election's mail: invitation progress per address (queued, sent, failed with the
 * server's answer), "send again" for failures, and the notices the organiser schedules. No code
 * ever appears here; nothing here says anything about voting.
 */
export function mailRoutes(deps: AppDeps): Router {
  const router = Router();
  const { ctx } = deps;
  router.use('/organise/elections/:id/mail', noStore);

  async function render(
    res: Response,
    id: string,
    status: number,
    extra: { errors?: FieldErrors; notice?: { kind: string; hoursBefore: string }; done?: string; problem?: string } = {},
  ) {
    const page = await mailPage(ctx, { electionId: id, organiserId: organiserOf(res).id });
    const errors = extra.errors ?? {};
    res.status(status).render('organise/mail', {
      title: `Mail for ${page.election.title}`,
      m: mailPageView(page, ctx.mail?.mailer.where ?? null, ctx.now()),
      notice: extra.notice ?? { kind: 'closing', hoursBefore: '24' },
      errors,
      summary: summaryOf(errors),
      done: extra.done ?? '',
      problem: extra.problem ?? '',
    });
  }

  router.get('/organise/elections/:id/mail', async (req, res) => {
    const done = typeof req.query.done === 'string' && /^(scheduled|cancelled|resent)$/.test(req.query.done) ? req.query.done : '';
    await render(res, req.params.id, 200, { done });
  });

  router.post('/organise/elections/:id/mail/notices', async (req, res) => {
    const notice = readNotice(req.body);
    try {
      await scheduleNotice(ctx, {
        electionId: req.params.id,
        organiserId: organiserOf(res).id,
        notice: notice.kind === 'closing' ? { kind: 'closing', hoursBefore: notice.hoursBefore } : { kind: notice.kind },
      });
    } catch (e) {
      if (e instanceof InvalidInput) return render(res, req.params.id, 400, { errors: errorsFrom(e), notice });
      if (isVeiltallyError(e) && e.status === 409) return render(res, req.params.id, 409, { problem: e.message, notice });
      throw e;
    }
    res.redirect(303, `/organise/elections/${req.params.id}/mail?done=scheduled`);
  });

  router.post('/organise/elections/:id/mail/notices/cancel', async (req, res) => {
    const { mailingId } = mailingIdField.parse(req.body ?? {});
    try {
      await cancelNotice(ctx, { electionId: req.params.id, organiserId: organiserOf(res).id, mailingId });
    } catch (e) {
      if (isVeiltallyError(e) && e.status === 409) return render(res, req.params.id, 409, { problem: e.message });
      throw e;
    }
    res.redirect(303, `/organise/elections/${req.params.id}/mail?done=cancelled`);
  });

  router.post('/organise/elections/:id/mail/resend', async (req, res) => {
    try {
      await resendFailed(ctx, { electionId: req.params.id, organiserId: organiserOf(res).id });
    } catch (e) {
      if (isVeiltallyError(e) && e.status === 409) return render(res, req.params.id, 409, { problem: e.message });
      throw e;
    }
    res.redirect(303, `/organise/elections/${req.params.id}/mail?done=resent`);
  });

  return router;
}
