import { openBallot, openingKey, wipe } from '../../src/custody/index.ts';
import { innerBallots, secretKeyFromRow } from './storedKeys.ts';
import { toBuffer } from '../../src/db/knex.ts';
import { findElection } from '../../src/elections/electionRepo.ts';
import { createFirstOrganiser } from '../../src/accounts/firstRun.ts';
import { createElection } from '../../src/elections/createElection.ts';
import { openElection } from '../../src/elections/openElection.ts';
import { castBallot } from '../../src/elections/castBallot.ts';
import { closeAndTally } from '../../src/elections/closeAndTally.ts';
import type { UseCaseContext } from '../../src/elections/context.ts';
import { issueCodes } from '../../src/elections/issueCodes.ts';
import { publishResult } from '../../src/elections/publishResult.ts';

/**
 * Elections for web tests, set up through the same use-cases the organiser's pages call
 * (createFirstOrganiser, createElection, issueCodes, openElection, castBallot, closeAndTally,
 * publishResult), so the pages under test read exactly what production stores.
 */
export const FIXTURE_PASSPHRASE = 'rowing club boat naming';
export const FIXTURE_PASSWORD = 'oars and rudders and tea';

export interface FixtureOptions {
  title?: string;
  description?: string;
  contact?: string;
  options?: { label: string; description?: string }[];
  seats?: number;
  epsilon?: string;
  neighbour?: 'replace-one' | 'add-remove';
  rule?: 'exponential' | 'permute-and-flip';
  opensAt?: Date;
  closesAt?: Date;
  timeZone?: string;
  publishTurnout?: boolean;
  codes?: number;
  memberGroup?: string;
  /** A bylaw quorum in ballots (null or absent: none). */
  quorum?: number | null;
  /** The opt-in live turnout's settings (absent: off). */
  liveTurnout?: { epsilon: string; intervalHours: number } | null;
}

export interface ElectionFixture {
  id: string;
  organiserId: string;
  codes: string[];
  options: { label: string; description: string }[];
}

const DEFAULT_OPTIONS = [
  { label: 'Heron', description: 'A grey wading bird, patient on the riverbank.' },
  { label: 'Kingfisher', description: 'Small, quick and bright blue.' },
  { label: 'Otter', description: '' },
  { label: 'Swift', description: 'Never lands, or so the story goes.' },
];

/** The instance's first organiser (one per test database). */
export async function createOrganiser(ctx: UseCaseContext, email = 'organiser@rowing.example'): Promise<string> {
  return (await createFirstOrganiser(ctx, { email, password: FIXTURE_PASSWORD })).organiserId;
}

/** A draft with its tally key and codes issued; not yet open. */
export async function createDraft(ctx: UseCaseContext, organiserId: string, o: FixtureOptions = {}): Promise<ElectionFixture> {
  const now = ctx.now();
  const options = (o.options ?? DEFAULT_OPTIONS).map((x) => ({ label: x.label, description: x.description ?? '' }));
  const opensAt = o.opensAt ?? now;
  const { electionId: id } = await createElection(ctx, {
    organiserId,
    passphrase: FIXTURE_PASSPHRASE,
    draft: {
      title: o.title ?? 'Name the new coxed four',
      description: o.description ?? 'The club has a new boat.\nTick every name you would be happy to row under.',
      contact: o.contact ?? '',
      options,
      seats: o.seats ?? 1,
      epsilon: o.epsilon ?? '1',
      neighbour: o.neighbour ?? 'replace-one',
      ...(o.rule ? { rule: o.rule } : {}),
      opensAt,
      closesAt: o.closesAt ?? new Date(opensAt.getTime() + 7 * 24 * 3600_000),
      timeZone: o.timeZone ?? 'Europe/London',
      publishTurnout: o.publishTurnout ?? false,
      retentionDays: null,
      expectedVoters: 20,
      ...(o.memberGroup === undefined ? {} : { memberGroup: o.memberGroup }),
      ...(o.quorum === undefined ? {} : { quorum: o.quorum }),
      ...(o.liveTurnout === undefined ? {} : { liveTurnout: o.liveTurnout }),
    },
  });
  const { codes } = await issueCodes(ctx, { electionId: id, organiserId, count: o.codes ?? 6 });
  return { id, organiserId, codes, options };
}

/** Opens a draft: at once, or on its own opening time when that is still ahead. */
export async function openFixture(ctx: UseCaseContext, f: ElectionFixture): Promise<void> {
  const e = await findElection(ctx.knex, f.id);
  const mode = e && e.opensAt > ctx.now() ? 'schedule' : 'now';
  await openElection(ctx, { electionId: f.id, organiserId: f.organiserId, mode });
}

export async function openElectionFixture(ctx: UseCaseContext, organiserId: string, o: FixtureOptions = {}): Promise<ElectionFixture> {
  const f = await createDraft(ctx, organiserId, o);
  await openFixture(ctx, f);
  return f;
}

/** Casts ballots given as lists of option positions, one code each, through castBallot. */
export async function castAll(ctx: UseCaseContext, f: ElectionFixture, ballots: number[][], firstCode = 0): Promise<string[]> {
  const receipts: string[] = [];
  for (let i = 0; i < ballots.length; i++) {
    const code = f.codes[firstCode + i];
    if (!code) throw new Error('not enough codes issued for these ballots');
    receipts.push((await castBallot(ctx, { electionId: f.id, code, approvals: ballots[i]! })).receipt);
  }
  return receipts;
}

/** Tallies (the clock must be past closesAt) and optionally publishes, through the use-cases. */
export async function tallyFixture(ctx: UseCaseContext, f: ElectionFixture, publish: boolean): Promise<string[]> {
  const { winners } = await closeAndTally(ctx, { electionId: f.id, organiserId: f.organiserId, passphrase: FIXTURE_PASSPHRASE });
  if (publish) await publishResult(ctx, { electionId: f.id, organiserId: f.organiserId });
  return winners;
}

/** Opens every stored ballot of an election with the tally passphrase: lets a test see what the pages cast. */
export async function openStoredBallots(ctx: UseCaseContext, electionId: string): Promise<number[][]> {
  const e = await findElection(ctx.knex, electionId);
  if (!e?.publicKey || e.wrappedKey == null) throw new Error('election has no tally key');
  const sk = await secretKeyFromRow(ctx, e.id, e.wrappedKey, FIXTURE_PASSPHRASE);
  try {
    const k = openingKey(e.publicKey, sk, e.id, e.options.length);
    const rows = await ctx.knex('ballots').where({ election_id: e.id }).select('sealed');
    const sealed = await innerBallots(
      ctx,
      e.id,
      e.wrappedKey,
      rows.map((r) => toBuffer(r.sealed)),
    );
    return sealed.map((c) => openBallot(k, c)).sort((a, b) => a.join().localeCompare(b.join()));
  } finally {
    wipe(sk);
  }
}

/** The CSRF token a page's form carries (test/helpers/csrf.ts). */
export { csrfFrom } from './csrf.ts';

/** An urlencoded body the way a browser sends it: a repeated name for each ticked box. */
export function formBody(fields: Record<string, string | readonly string[] | undefined>): string {
  const p = new URLSearchParams();
  for (const [name, value] of Object.entries(fields)) {
    if (value === undefined) continue;
    for (const v of typeof value === 'string' ? [value] : value) p.append(name, v);
  }
  return p.toString();
}
