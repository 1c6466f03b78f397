import { Router, type Response } from 'express';
import { addOrganiser } from '../../../accounts/addOrganiser.ts';
import { EmailTaken, FirstRunDone, SignInFailed } from '../../../accounts/errors.ts';
import { createFirstOrganiser, isFirstRunOpen } from '../../../accounts/firstRun.ts';
import { requireAdministrator } from '../../../accounts/manageOrganisers.ts';
import { allOrganisers, getOrganiser, organiserCount } from '../../../accounts/organisers.ts';
import { signIn } from '../../../accounts/signIn.ts';
import { findDemo } from '../../../demo/seedDemo.ts';
import { recordEvent } from '../../../elections/audit.ts';
import type { AppDeps } from '../../deps.ts';
import { isSecureSite } from '../../middleware/sessions.ts';
import { readNewOrganiser, readSignIn } from './accountSchema.ts';
import { endSession, FIRST_RUN_PATH, organiserOf, requireOrganiser, safeNext, SIGN_IN_PATH, startSession } from './auth.ts';
import { summaryOf, type FieldErrors } from './forms.ts';

/** First run, sign-in, sign-out and the organisers page. */
export function accountRoutes(deps: AppDeps): Router {
  const router = Router();
  const { ctx } = deps;
  // OWASP Authentication Cheat Sheet: throttle failed sign-ins; 10 per quarter hour per address (our choice).
  const { signInAttempts } = deps.limits;
  const cookieName = isSecureSite(deps.config.publicUrl) ? '__Host-veiltally' : 'veiltally';

  const renderFirstRun = async (res: Response, status: number, email: string, errors: FieldErrors) =>
    res.status(status).render('organise/first-run', {
      title: 'Set up this site',
      email,
      errors,
      summary: summaryOf(errors),
      demoReady: (await findDemo(ctx)) !== null,
    });

  router.get(FIRST_RUN_PATH, async (_req, res) => {
    if (!(await isFirstRunOpen(ctx.knex))) return res.redirect(303, SIGN_IN_PATH);
    await renderFirstRun(res, 200, '', {});
  });

  router.post(FIRST_RUN_PATH, signInAttempts, async (req, res) => {
    if (!(await isFirstRunOpen(ctx.knex))) throw new FirstRunDone();
    const form = readNewOrganiser(req.body);
    if (Object.keys(form.errors).length > 0) return await renderFirstRun(res, 400, form.values.email, form.errors);
    const { organiserId } = await createFirstOrganiser(ctx, { email: form.email, password: form.password });
    await startSession(req, organiserId, ctx.now());
    res.redirect(303, '/organise');
  });

  const renderSignIn = (res: Response, status: number, email: string, next: string | null, problem?: string) =>
    res.status(status).render('organise/sign-in', { title: 'Sign in', email, next: next ?? '', problem: problem ?? null });

  router.get(SIGN_IN_PATH, async (req, res) => {
    // Only when nobody at all can sign in: the demo's sample login can, while the first run stays open.
    if ((await organiserCount(ctx)) === 0) return res.redirect(303, FIRST_RUN_PATH);
    const next = safeNext(req.query.next);
    if (req.session?.organiserId) return res.redirect(303, next ?? '/organise');
    renderSignIn(res, 200, '', next);
  });

  router.post(SIGN_IN_PATH, signInAttempts, async (req, res) => {
    const parsed = (() => {
      try {
        return readSignIn(req.body);
      } catch {
        return null;
      }
    })();
    const next = safeNext(parsed?.next);
    try {
      if (!parsed) throw new SignInFailed();
      const { organiserId } = await signIn(ctx, { email: parsed.email, password: parsed.password });
      const demo = (await getOrganiser(ctx, organiserId))?.demo ?? false;
      await startSession(req, organiserId, ctx.now(), demo);
      res.redirect(303, next ?? '/organise');
    } catch (e) {
      if (!(e instanceof SignInFailed)) throw e;
      renderSignIn(res, 401, parsed?.email.slice(0, 254) ?? '', next, e.message);
    }
  });

  router.post('/organise/sign-out', async (req, res) => {
    const organiserId = req.session?.organiserId;
    if (organiserId) await recordEvent(ctx.knex, { electionId: null, organiserId, action: 'signed-out' }, ctx.now());
    if (req.session) await endSession(req);
    res.clearCookie(cookieName, { path: '/', httpOnly: true, sameSite: 'lax', secure: isSecureSite(deps.config.publicUrl) });
    res.redirect(303, '/');
  });

  const renderOrganisers = async (res: Response, status: number, email: string, errors: FieldErrors, added: boolean) =>
    res.status(status).render('organise/organisers', {
      title: 'Organiser accounts',
      organisers: await allOrganisers(ctx),
      me: organiserOf(res),
      email,
      errors,
      summary: summaryOf(errors),
      added,
    });

  router.get('/organise/organisers', requireOrganiser(deps), async (req, res) => {
    await requireAdministrator(ctx, organiserOf(res).id);
    res.locals.notice = req.query.removed === '1' ? 'Organiser removed. They can no longer sign in.' : null;
    await renderOrganisers(res, 200, '', {}, req.query.added === '1');
  });

  router.post('/organise/organisers', requireOrganiser(deps), async (req, res) => {
    await requireAdministrator(ctx, organiserOf(res).id);
    const form = readNewOrganiser(req.body);
    if (Object.keys(form.errors).length > 0) return renderOrganisers(res, 400, form.values.email, form.errors, false);
    try {
      await addOrganiser(ctx, { organiserId: organiserOf(res).id, email: form.email, password: form.password });
    } catch (e) {
      if (!(e instanceof EmailTaken)) throw e;
      return renderOrganisers(res, 409, form.values.email, { email: e.message }, false);
    }
    res.redirect(303, '/organise/organisers?added=1');
  });

  return router;
}
