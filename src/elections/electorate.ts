import type { Db } from '../db/knex.ts';
import { InvalidInput } from '../errors.ts';
import { isRosterOrganiser } from '../rosters/rosterRepo.ts';
import { ELECTORATE_MESSAGE } from './draft.ts';

/**
 * The electorate a draft may name: null (printed codes) or a roster this organiser is one of the
 * organisers of. A missing roster, a malformed id and another organiser's roster get the same
 * refusal, on the form's electorate field, so roster ids cannot be probed through the form.
 * `current` is the roster the draft already names: an organiser the election (not the roster)
 * was shared with may keep it while editing other settings, never pick a roster they cannot see.
 */
export async function checkElectorate(
  db: Db,
  rosterId: string | null | undefined,
  organiserId: string,
  current: string | null = null,
): Promise<void> {
  if (rosterId === undefined || rosterId === null || rosterId === current) return;
  if (await isRosterOrganiser(db, rosterId, organiserId)) return;
  throw new InvalidInput('Please correct the highlighted fields.', [{ path: 'electorate', message: ELECTORATE_MESSAGE }]);
}
