import { signStatement } from '../custody/index.ts';
import type { Db } from '../db/knex.ts';
import {
  buildPublicStatement,
  canonicalJson,
  ledgerTotals,
  sumEpsilons,
  turnoutSchedule,
  toMinute,
  unprotectedReleases,
  type ExponentialDraw,
  type StatementEnvelope,
  type StatementLedger,
} from '../mechanism/index.ts';
import type { UseCaseContext } from './context.ts';
import type { Election } from './electionRepo.ts';
import { AlreadyTallied } from './errors.ts';
import { electorateTotals } from './ledger.ts';
import { chargeDraw, countElectorate, DEFAULT_GROUP_NAME, findGroup, groupIdFor, listLedger } from './ledgerRepo.ts';
import { registerSigningKey } from './signingKeyRepo.ts';

/** A live turnout's settings and its number of releases, for the ledger and both statements; null when it was off. */
export function liveTurnoutOf(e: Election): { epsilon: string; intervalHours: number; releases: number } | null {
  return e.liveTurnout ? { ...e.liveTurnout, releases: turnoutSchedule(e.opensAt, e.closesAt, e.liveTurnout.intervalHours).length } : null;
}

/**
 * The part of the draw that makes it accountable, run inside the draw's own transaction:
 * charge the ledger, the members' or the group's (whether or not the result is ever published), take the next
 * instance-wide draw sequence number, and sign the statement for this one election and this one
 * draw. The statements table allows one row per election and, like the ledger, refuses updates
 * and deletes, so the instance never signs two draws for one election.
 */
export async function chargeAndSign(
  trx: Db,
  ctx: UseCaseContext,
  input: {
    election: Election;
    draw: ExponentialDraw;
    winners: number[] | null;
    ballots: number;
    at: Date;
    /** Roster elections: replacement codes sent (replacementRepo.takeReplacementCount). */
    replacements?: number;
  },
): Promise<StatementEnvelope> {
  const { election: e, draw, at } = input;
  // One election, one draw: if a statement exists (an election reset behind the app's back), refuse.
  if (await trx('statements').where({ election_id: e.id }).first('draw_sequence')) throw new AlreadyTallied();
  // A live turnout's releases are charged with the draw, to whether a member voted (basic composition).
  const live = liveTurnoutOf(e);
  const charge = {
    electionId: e.id,
    at,
    howVoted: draw.privacy.howVoted,
    whetherVoted: live ? sumEpsilons([draw.privacy.whetherVoted, live.epsilon]) : draw.privacy.whetherVoted,
    unprotected: unprotectedReleases(e.publishTurnout, e.quorum !== null),
  };
  // A roster election is charged to the members recorded at its opening; printed codes to the owner's group.
  const members = await countElectorate(trx, e.id);
  let ledger: StatementLedger;
  if (members > 0) {
    await chargeDraw(trx, { groupId: null, ...charge });
    ledger = {
      members,
      ...(input.replacements === undefined ? {} : { replacements: input.replacements }),
      ...(await electorateTotals(trx, e.id, at)),
    };
  } else {
    const groupId = e.groupId ?? (await groupIdFor(trx, e.ownerId, DEFAULT_GROUP_NAME, at));
    if (!e.groupId) await trx('elections').where({ id: e.id }).update({ group_id: groupId });
    const group = (await findGroup(trx, groupId))!;
    await chargeDraw(trx, { groupId, ...charge });
    ledger = { groupId, groupName: group.name, ...ledgerTotals(await listLedger(trx, groupId), at) };
  }
  const seq = await trx.raw(`SELECT nextval(pg_get_serial_sequence('statements', 'draw_sequence')) AS n`);
  const drawSequence = Number(seq.rows[0].n);
  const key = await registerSigningKey(trx, ctx.secrets.signingSeed, at);
  const statement = buildPublicStatement({
    draw,
    electionId: e.id,
    electionTitle: e.title,
    keyId: key.keyId,
    drawSequence,
    drawnAt: toMinute(at),
    optionLabels: e.options.map((o) => o.label),
    winners: input.winners,
    publishedTurnout: e.publishTurnout ? input.ballots : null,
    liveTurnout: live,
    quorum: e.quorum === null ? null : { minimum: e.quorum, ballots: input.ballots },
    ledger,
  });
  const canonical = canonicalJson(statement);
  const value = signStatement(new TextEncoder().encode(canonical), ctx.secrets.signingSeed).toString('base64url');
  await trx('statements').insert({ draw_sequence: drawSequence, election_id: e.id, key_id: key.keyId, canonical, signature: value });
  return { statement, signature: { alg: 'Ed25519', keyId: key.keyId, value } };
}

/** The stored envelope for an election, exactly as signed; null before the draw. */
export async function findStatement(db: Db, electionId: string): Promise<{ canonical: string; envelope: StatementEnvelope } | null> {
  const r = await db('statements').where({ election_id: electionId }).first('canonical', 'key_id', 'signature');
  if (!r) return null;
  return {
    canonical: r.canonical,
    envelope: { statement: JSON.parse(r.canonical), signature: { alg: 'Ed25519', keyId: r.key_id, value: r.signature } },
  };
}
