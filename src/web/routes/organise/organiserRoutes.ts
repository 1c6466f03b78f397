import { Router, type Response } from 'express';
import { CannotRemoveYourself, OrganiserNotFound, WrongCurrentPassword } from '../../../accounts/errors.ts';
import { changeOwnPassword, removeOrganiser, requireAdministrator } from '../../../accounts/manageOrganisers.ts';
import { getOrganiser } from '../../../accounts/organisers.ts';
import { InvalidInput } from '../../../errors.ts';
import type { AppDeps } from '../../deps.ts';
import { organiserOf } from './auth.ts';
import { readPasswords } from './basicsSchema.ts';
import { errorsFrom, summaryOf, type FieldErrors } from './forms.ts';

/**
 * Accounts after the first run: change one's own password (with the current one); an
 * administrator removes another organiser. Nobody sets another organiser's password from the
 * web: the operator does, with `veiltally organiser reset-password`. Passwords are never written
 * back into a page; every change ends the sessions it must (see accounts/manageOrganisers.ts).
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

  // Administrators only, checked before the target is looked up, so the answer says nothing about it.
  async function target(res: Response, id: string) {
    await requireAdministrator(ctx, organiserOf(res).id);
    const o = await getOrganiser(ctx, id);
    if (!o) throw new OrganiserNotFound();
    return o;
  }

  router.get('/organise/organisers/:oid/remove', async (req, res) => {
    const other = await target(res, req.params.oid);
    if (other.id === organiserOf(res).id) throw new CannotRemoveYourself();
    res.render('organise/organiser-remove', { title: 'Remove an organiser', other });
  });

  router.post('/organise/organisers/:oid/remove', async (req, res) => {
    await removeOrganiser(ctx, { organiserId: organiserOf(res).id, targetId: req.params.oid });
    res.redirect(303, '/organise/organisers?removed=1');
  });

  return router;
}
