import { createDemoOrganiser } from '../accounts/demoOrganiser.ts';
import { castBallot } from '../elections/castBallot.ts';
import { closeAndTally } from '../elections/closeAndTally.ts';
import type { UseCaseContext } from '../elections/context.ts';
import { createElection } from '../elections/createElection.ts';
import { findElection } from '../elections/electionRepo.ts';
import { issueCodes } from '../elections/issueCodes.ts';
import { openElection } from '../elections/openElection.ts';
import { publishResult } from '../elections/publishResult.ts';
import { createRoster, importMembers } from '../rosters/manageRosters.ts';
import { claimDemo, countRealElections, readDemo, saveDemo, type DemoRecord } from './demoRepo.ts';
import { DemoBusy, DemoIncomplete, DemoRefused } from './errors.ts';
import { ROWING_CLUB, TENANTS, type DemoScenario } from './scenarios.ts';
import { inventBallots } from './seededBallots.ts';

const HOUR = 3600_000;
const DAY = 24 * HOUR;
/** How many unused codes of the open sample election are shown, so a newcomer can vote. */
export const SHOWN_CODES = 5;
const BALLOT_SEED = 'veiltally demo ballots v1';

export interface DemoSummary {
  /** False when the sample elections existed already: nothing was added, and no password is shown. */
  created: boolean;
  organiser: { id: string; email: string; password: string | null };
  open: { id: string; title: string; codes: number; unusedCodes: string[]; passphrase: string };
  /** groupId: the member group whose privacy ledger the draw was charged to. */
  published: { id: string; title: string; receipt: string; groupId: string | null };
  /** The roster election: its invented members are each mailed a code (null in a demo made before it existed). */
  mailed: { id: string; title: string; members: number } | null;
}

/** The sample roster: invented members of a rowing club's boat-house crew, at a reserved domain (RFC 2606). */
const MAILED = {
  title: 'Pick the colour of the new boat-house doors',
  roster: 'Boat-house volunteers (sample)',
  members: [
    ['ada.sculler@rowing.example', 'Ada Sculler'],
    ['ben.bow@rowing.example', 'Ben Bow'],
    ['cara.cox@rowing.example', 'Cara Cox'],
    ['dev.stroke@rowing.example', 'Dev Stroke'],
    ['eli.rigger@rowing.example', 'Eli Rigger'],
    ['fay.oar@rowing.example', ''],
  ] as const,
  options: ['Racing green', 'River blue', 'Signal red', 'Plain varnish'],
};

export interface SeedOptions {
  /** How long a second caller waits for a first one still seeding, before DemoBusy. */
  waitMs?: number;
}

/**
 * Adds the two sample elections through the real use-cases (createElection, issueCodes,
 * openElection, castBallot with sealed ballots, closeAndTally, publishResult), owned by a
 * demo organiser. Runs at most once per database: the instance_settings row "demo" is claimed
 * first, so a second run (or a double-submitted form) adds nothing and reports what exists.
 * Refuses a database holding elections of real organisers.
 *
 * The sample elections are placed in the recent past through the clock the use-cases are given:
 * the result was drawn about a week ago, and the open election has been open for two days.
 */
export async function seedDemo(ctx: UseCaseContext, options: SeedOptions = {}): Promise<DemoSummary> {
  const existing = await readDemo(ctx.knex);
  if (existing) return summaryOf(await waitForReady(ctx, existing, options.waitMs ?? 60_000), null);
  if ((await countRealElections(ctx.knex)) > 0) throw new DemoRefused();

  const start = ctx.now();
  const record: DemoRecord = { state: 'seeding', startedAt: start.toISOString() };
  if (!(await claimDemo(ctx.knex, record))) {
    return summaryOf(await waitForReady(ctx, (await readDemo(ctx.knex))!, options.waitMs ?? 60_000), null);
  }
  try {
    const organiser = await createDemoOrganiser(ctx);
    record.organiserId = organiser.organiserId;
    record.organiserEmail = organiser.email;
    const published = await seedPublished(ctx, organiser.organiserId, TENANTS, new Date(start.getTime() - 14 * DAY));
    record.publishedElectionId = published.id;
    record.publishedGroupId = (await findElection(ctx.knex, published.id))?.groupId ?? undefined;
    record.sampleReceipt = published.receipt;
    const open = await seedOpen(ctx, organiser.organiserId, ROWING_CLUB, new Date(start.getTime() - 2 * DAY), start);
    record.mailedElectionId = await seedMailed(ctx, organiser.organiserId, start);
    Object.assign(record, {
      openElectionId: open.id,
      unusedCodes: open.unusedCodes,
      openElectionPassphrase: open.passphrase,
      state: 'ready',
    });
    await saveDemo(ctx.knex, record);
    return summaryOf(record, organiser.password);
  } catch (e) {
    await saveDemo(ctx.knex, { ...record, state: 'failed' }).catch(() => undefined);
    throw e;
  }
}

async function waitForReady(ctx: UseCaseContext, record: DemoRecord, waitMs: number): Promise<DemoRecord> {
  const until = Date.now() + waitMs;
  let current: DemoRecord | null = record;
  while (current?.state === 'seeding' && Date.now() < until) {
    await new Promise((r) => setTimeout(r, 250));
    current = await readDemo(ctx.knex);
  }
  if (current?.state === 'ready') return current;
  if (current?.state === 'seeding') throw new DemoBusy();
  throw new DemoIncomplete();
}

/** The sample elections as they stand, or null when the demo never ran or is unfinished. */
export async function findDemo(ctx: UseCaseContext): Promise<DemoSummary | null> {
  const r = await readDemo(ctx.knex);
  return r?.state === 'ready' ? summaryOf(r, null) : null;
}

function summaryOf(r: DemoRecord, password: string | null): DemoSummary {
  return {
    created: password !== null,
    organiser: { id: r.organiserId!, email: r.organiserEmail!, password },
    open: {
      id: r.openElectionId!,
      title: ROWING_CLUB.title,
      codes: ROWING_CLUB.codes,
      unusedCodes: r.unusedCodes ?? [],
      passphrase: r.openElectionPassphrase!,
    },
    published: { id: r.publishedElectionId!, title: TENANTS.title, receipt: r.sampleReceipt!, groupId: r.publishedGroupId ?? null },
    mailed: r.mailedElectionId ? { id: r.mailedElectionId, title: MAILED.title, members: MAILED.members.length } : null,
  };
}

/** The same context at a chosen moment of the sample story. */
const at = (ctx: UseCaseContext, t: number): UseCaseContext => ({ ...ctx, now: () => new Date(t) });

/** A tally passphrase for a sample election: random, shown by the demo so a newcomer can try the tally. */
function samplePassphrase(ctx: UseCaseContext): string {
  return `sample-${Buffer.from(ctx.random(12)).toString('base64url')}`;
}

async function createSample(ctx: UseCaseContext, organiserId: string, s: DemoScenario, opensAt: Date, closesAt: Date, passphrase: string) {
  const { electionId } = await createElection(ctx, {
    organiserId,
    passphrase,
    draft: {
      title: s.title,
      description: s.description,
      options: s.options.map((o) => ({ label: o.label, description: o.description })),
      seats: s.seats,
      epsilon: s.epsilon,
      neighbour: 'replace-one',
      opensAt,
      closesAt,
      timeZone: 'UTC',
      publishTurnout: false,
      retentionDays: null,
      expectedVoters: s.codes,
      memberGroup: s.group,
    },
  });
  const { codes } = await issueCodes(ctx, { electionId, organiserId, count: s.codes });
  return { electionId, codes };
}

/** Casts the invented ballots one by one through castBallot, spread over the voting period. */
async function castSample(ctx: UseCaseContext, electionId: string, s: DemoScenario, codes: string[], from: number, to: number) {
  const ballots = inventBallots(
    `${BALLOT_SEED}/${s.title}`,
    s.options.map((o) => o.share),
    s.voters,
  );
  const receipts: string[] = [];
  for (const [i, approvals] of ballots.entries()) {
    const t = from + Math.floor(((i + 1) * (to - from)) / (ballots.length + 1));
    receipts.push((await castBallot(at(ctx, t), { electionId, code: codes[i]!, approvals })).receipt);
  }
  return receipts;
}

/** The tenants' vote: open for a week, drawn after it closed, then published. */
async function seedPublished(ctx: UseCaseContext, organiserId: string, s: DemoScenario, opensAt: Date) {
  const t0 = opensAt.getTime();
  const closesAt = new Date(t0 + 7 * DAY);
  const passphrase = samplePassphrase(ctx);
  const draft = at(ctx, t0 - DAY);
  const { electionId, codes } = await createSample(draft, organiserId, s, opensAt, closesAt, passphrase);
  await openElection(at(ctx, t0), { electionId, organiserId, mode: 'now' });
  const receipts = await castSample(ctx, electionId, s, codes, t0, closesAt.getTime());
  await closeAndTally(at(ctx, closesAt.getTime() + HOUR), { electionId, organiserId, passphrase });
  await publishResult(at(ctx, closesAt.getTime() + 2 * HOUR), { electionId, organiserId });
  return { id: electionId, receipt: receipts[0]! };
}

/** The rowing club's vote: opened two days ago, closing in five; 25 of 40 codes used so far. */
async function seedOpen(ctx: UseCaseContext, organiserId: string, s: DemoScenario, opensAt: Date, now: Date) {
  const t0 = opensAt.getTime();
  const closesAt = new Date(now.getTime() + 5 * DAY);
  const passphrase = samplePassphrase(ctx);
  const { electionId, codes } = await createSample(at(ctx, t0 - HOUR), organiserId, s, opensAt, closesAt, passphrase);
  await openElection(at(ctx, t0), { electionId, organiserId, mode: 'now' });
  await castSample(ctx, electionId, s, codes, t0, now.getTime() - HOUR);
  return { id: electionId, unusedCodes: codes.slice(s.voters, s.voters + SHOWN_CODES), passphrase };
}

/**
 * A roster election opened now: opening queues one invitation per invented member, and the
 * server's mail loop sends them (without SMTP_URL, into the outbox folder, where a newcomer can
 * open one and vote as that member). The demo never sees or keeps these codes.
 */
async function seedMailed(ctx: UseCaseContext, organiserId: string, now: Date): Promise<string> {
  const { rosterId } = await createRoster(ctx, { organiserId, name: MAILED.roster });
  await importMembers(ctx, { organiserId, rosterId, csv: MAILED.members.map(([email, name]) => `${email},${name}`).join('\n') });
  const { electionId } = await createElection(ctx, {
    organiserId,
    passphrase: samplePassphrase(ctx),
    draft: {
      title: MAILED.title,
      description: 'The doors are sanded and primed. Tick every colour you would be glad to see each morning.',
      options: MAILED.options.map((label) => ({ label, description: '' })),
      seats: 1,
      epsilon: '1',
      neighbour: 'replace-one',
      opensAt: now,
      closesAt: new Date(now.getTime() + 5 * DAY),
      timeZone: 'UTC',
      publishTurnout: false,
      retentionDays: null,
      expectedVoters: MAILED.members.length,
      rosterId,
    },
  });
  await openElection(ctx, { electionId, organiserId, mode: 'now' });
  return electionId;
}
