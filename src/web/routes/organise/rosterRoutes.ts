import { Router, type Response } from 'express';
import { InvalidInput } from '../../../errors.ts';
import { RosterFrozen, RosterImportRejected, RosterInUse, type RosterRowError } from '../../../rosters/errors.ts';
import { addMember, createRoster, deleteRoster, importMembers, removeMember, renameRoster, shareRoster } from '../../../rosters/manageRosters.ts';
import { ROSTER_LIMITS } from '../../../rosters/rosterInput.ts';
import { rosterDeletion, rosterList, rosterPage } from '../../../rosters/rosterPages.ts';
import type { AppDeps } from '../../deps.ts';
import { noStore } from '../../middleware/security.ts';
import { organiserOf } from './auth.ts';
import { errorsFrom, summaryOf, type FieldErrors } from './forms.ts';
import { readCsv, readMember, readRosterName, readShareEmail } from './rosterSchema.ts';

/**
 * Member rosters, /organise/rosters/**. A roster is seen only by its organisers (owner and those
 * it was shared with); anyone else's answers 404 like a missing one. The pages show addresses,
 * so every answer is no-store; addresses never appear in a URL (members are named by id).
 */
export function rosterRoutes(deps: AppDeps): Router {
  const router = Router();
  const { ctx } = deps;
  router.use('/organise/rosters', noStore);
  const me = (res: Response) => organiserOf(res).id;

  async function renderList(res: Response, name = '', errors: FieldErrors = {}, notice: string | null = null) {
    res.render('organise/rosters', {
      title: 'Member rosters',
      rosters: await rosterList(ctx, me(res)),
      name,
      errors,
      summary: summaryOf(errors),
      notice,
    });
  }

  router.get('/organise/rosters', async (req, res) => {
    await renderList(res, '', {}, req.query.deleted === '1' ? 'The roster and every address on it have been deleted.' : null);
  });

  router.post('/organise/rosters', async (req, res) => {
    const name = readRosterName(req.body);
    try {
      const { rosterId } = await createRoster(ctx, { organiserId: me(res), name });
      res.redirect(303, `/organise/rosters/${rosterId}`);
    } catch (e) {
      if (!(e instanceof InvalidInput)) throw e;
      res.status(400);
      await renderList(res, name, errorsFrom(e));
    }
  });

  interface Kept {
    name?: string;
    member?: { email: string; name: string };
    csv?: string;
    shareEmail?: string;
    errors?: FieldErrors;
    rowErrors?: readonly RosterRowError[];
    notice?: string | null;
    problem?: string | null;
  }

  async function renderRoster(res: Response, rosterId: string, kept: Kept = {}) {
    const { roster, members, organisers, elections, frozen } = await rosterPage(ctx, { organiserId: me(res), rosterId });
    const errors = kept.errors ?? {};
    res.render('organise/roster', {
      title: roster.name,
      roster,
      members,
      organisers,
      elections,
      frozen,
      limits: ROSTER_LIMITS,
      me: organiserOf(res),
      name: kept.name ?? roster.name,
      member: kept.member ?? { email: '', name: '' },
      csv: kept.csv ?? '',
      shareEmail: kept.shareEmail ?? '',
      errors,
      summary: summaryOf(errors),
      rowErrors: kept.rowErrors ?? [],
      notice: kept.notice ?? null,
      problem: kept.problem ?? null,
    });
  }

  const NOTICES: Record<string, string> = {
    renamed: 'Renamed.',
    added: 'Member added.',
    removed: 'Member removed: their address and name are deleted.',
    shared: 'Shared. That organiser can now see these addresses and use this roster.',
  };

  router.get('/organise/rosters/:rid', async (req, res) => {
    const done = typeof req.query.done === 'string' ? req.query.done : '';
    const imported = typeof req.query.imported === 'string' && /^\d{1,6}$/.test(req.query.imported) ? Number(req.query.imported) : null;
    const notice = imported !== null ? `Imported ${imported} member${imported === 1 ? '' : 's'}.` : (NOTICES[done] ?? null);
    await renderRoster(res, req.params.rid, { notice });
  });

  /** A refused change: bad input keeps what was typed (400); a state that forbids it explains itself (409). */
  async function refused(res: Response, rosterId: string, e: unknown, kept: Kept) {
    if (e instanceof RosterImportRejected) {
      res.status(400);
      return renderRoster(res, rosterId, { ...kept, errors: errorsFrom(e), rowErrors: e.rows, problem: e.message });
    }
    if (e instanceof InvalidInput) {
      res.status(400);
      return renderRoster(res, rosterId, { ...kept, errors: errorsFrom(e) });
    }
    if (e instanceof RosterFrozen || e instanceof RosterInUse) {
      res.status(409);
      return renderRoster(res, rosterId, { ...kept, problem: e.message });
    }
    throw e;
  }

  router.post('/organise/rosters/:rid/name', async (req, res) => {
    const name = readRosterName(req.body);
    try {
      await renameRoster(ctx, { organiserId: me(res), rosterId: req.params.rid, name });
    } catch (e) {
      return refused(res, req.params.rid, e, { name });
    }
    res.redirect(303, `/organise/rosters/${req.params.rid}?done=renamed`);
  });

  router.post('/organise/rosters/:rid/members', async (req, res) => {
    const member = readMember(req.body);
    try {
      await addMember(ctx, { organiserId: me(res), rosterId: req.params.rid, ...member });
    } catch (e) {
      return refused(res, req.params.rid, e, { member });
    }
    res.redirect(303, `/organise/rosters/${req.params.rid}?done=added`);
  });

  router.post('/organise/rosters/:rid/members/:mid/remove', async (req, res) => {
    try {
      await removeMember(ctx, { organiserId: me(res), rosterId: req.params.rid, memberId: req.params.mid });
    } catch (e) {
      return refused(res, req.params.rid, e, {});
    }
    res.redirect(303, `/organise/rosters/${req.params.rid}?done=removed`);
  });

  router.post('/organise/rosters/:rid/import', async (req, res) => {
    const csv = readCsv(req.body);
    let added: number;
    try {
      ({ added } = await importMembers(ctx, { organiserId: me(res), rosterId: req.params.rid, csv }));
    } catch (e) {
      return refused(res, req.params.rid, e, { csv });
    }
    res.redirect(303, `/organise/rosters/${req.params.rid}?imported=${added}`);
  });

  router.post('/organise/rosters/:rid/sharing', async (req, res) => {
    const shareEmail = readShareEmail(req.body);
    try {
      await shareRoster(ctx, { organiserId: me(res), rosterId: req.params.rid, email: shareEmail });
    } catch (e) {
      return refused(res, req.params.rid, e, { shareEmail });
    }
    res.redirect(303, `/organise/rosters/${req.params.rid}?done=shared`);
  });

  router.get('/organise/rosters/:rid/delete', async (req, res) => {
    const { roster, using } = await rosterDeletion(ctx, { organiserId: me(res), rosterId: req.params.rid });
    res.render('organise/roster-delete', { title: `Delete ${roster.name}`, roster, live: using.filter((e) => e.state !== 'published') });
  });

  router.post('/organise/rosters/:rid/delete', async (req, res) => {
    try {
      await deleteRoster(ctx, { organiserId: me(res), rosterId: req.params.rid });
    } catch (e) {
      return refused(res, req.params.rid, e, {});
    }
    res.redirect(303, '/organise/rosters?deleted=1');
  });

  return router;
}
