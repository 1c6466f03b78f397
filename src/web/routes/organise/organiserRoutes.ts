import { Router, type Response } from 'express';
import { CannotRemoveYourself, OrganiserNotFound, WrongCurrentPassword } from '../../../accounts/errors.ts';
import { changeOwnPassword, removeOrganiser, resetOrganiserPassword } from '../../../accounts/manageOrganisers.ts';
import { getOrganiser } from '../../../accounts/organisers.ts';
import { InvalidInput } from '../../../errors.ts';
import type { AppDeps } from '../../deps.ts';
import { organiserOf } from './auth.ts';
import { readPasswords } from './basicsSchema.ts';
import { errorsFrom, summaryOf, type FieldErrors } from './forms.ts';

/**
 * Accounts after the first run: change one's own password, set a new password for another
 * organiser who lost theirs, remove another organiser. Passwords are never written back into
 * a page; every change ends the sessions it must (see accounts/manageOrganisers.ts).
 */
export function organiserRoutes(deps: AppDeps): Router {
  const router = Router();
  const { ctx } = deps;

  const renderOwn = (res: Response, status: number, errors: FieldErrors = {}, changed = false) =>
    res.status(status).render('organise/password', { title: 'Your account', errors, summary: summaryOf(errors), changed, me: organiserOf(res) });

  router.get('/organise/account', (req, res) => {
    renderOwn(res, 200, {}, req.query.changed === '1');
  });

  router.post('/organise/account/password', async (req, res) => {
    const form = readPasswords(req.body);
    try {
      await changeOwnPassword(ctx, { organiserId: organiserOf(res).id, currentSessionId: req.sessionID, ...form });
    } catch (e) {
      if (e instanceof WrongCurrentPassword) return renderOwn(res, 400, { current: e.message });
      if (e instanceof InvalidInput) return renderOwn(res, 400, errorsFrom(e));
      throw e;
    }
    res.redirect(303, '/organise/account?changed=1');
  });

  async function target(res: Response, id: string) {
    const o = await getOrganiser(ctx, id);
    if (!o) throw new OrganiserNotFound();
    return o;
  }

  const renderReset = async (res: Response, id: string, status: number, errors: FieldErrors = {}) =>
    res
      .status(status)
      .render('organise/organiser-password', { title: 'Set a new password', other: await target(res, id), errors, summary: summaryOf(errors) });

  router.get('/organise/organisers/:oid/password', async (req, res) => {
    if (req.params.oid === organiserOf(res).id) return res.redirect(303, '/organise/account');
    await renderReset(res, req.params.oid, 200);
  });

  router.post('/organise/organisers/:oid/password', async (req, res) => {
    const { password, passwordAgain } = readPasswords(req.body);
    if (req.params.oid === organiserOf(res).id) return res.redirect(303, '/organise/account');
    try {
      await resetOrganiserPassword(ctx, { organiserId: organiserOf(res).id, targetId: req.params.oid, password, passwordAgain });
    } catch (e) {
      if (e instanceof InvalidInput) return renderReset(res, req.params.oid, 400, errorsFrom(e));
      throw e;
    }
    res.redirect(303, '/organise/organisers?reset=1');
  });

  router.get('/organise/organisers/:oid/remove', async (req, res) => {
    if (req.params.oid === organiserOf(res).id) throw new CannotRemoveYourself();
    res.render('organise/organiser-remove', { title: 'Remove an organiser', other: await target(res, req.params.oid) });
  });

  router.post('/organise/organisers/:oid/remove', async (req, res) => {
    await removeOrganiser(ctx, { organiserId: organiserOf(res).id, targetId: req.params.oid });
    res.redirect(303, '/organise/organisers?removed=1');
  });

  return router;
}
