import { createElection } from '../../src/elections/createElection.ts';
import type { UseCaseContext } from '../../src/elections/context.ts';
import { openElection } from '../../src/elections/openElection.ts';
import { createRoster, importMembers } from '../../src/rosters/manageRosters.ts';
import { FIXTURE_PASSPHRASE } from './fixtures.ts';

/** A roster of `members` (address, optional name) made through the real import, and a roster election on it. */
export async function rosterWith(
  ctx: UseCaseContext,
  organiserId: string,
  members: readonly { email: string; name?: string }[],
  name = 'Rowing club members',
) {
  const { rosterId } = await createRoster(ctx, { organiserId, name });
  const csv = members.map((m) => `"${m.email}","${(m.name ?? '').replace(/"/g, '""')}"`).join('\n');
  await importMembers(ctx, { organiserId, rosterId, csv });
  return rosterId;
}

export async function rosterElection(
  ctx: UseCaseContext,
  organiserId: string,
  rosterId: string,
  o: { open?: boolean; opensInHours?: number; closesInHours?: number; title?: string; epsilon?: string } = {},
): Promise<string> {
  const now = ctx.now();
  const opensAt = new Date(now.getTime() + (o.opensInHours ?? 0) * 3600_000);
  const { electionId } = await createElection(ctx, {
    organiserId,
    passphrase: FIXTURE_PASSPHRASE,
    draft: {
      title: o.title ?? 'Name the new coxed four',
      description: 'Tick every name you would be happy to row under.',
      contact: 'captain@rowing.example',
      options: [
        { label: 'Heron', description: '' },
        { label: 'Kingfisher', description: '' },
        { label: 'Otter', description: '' },
      ],
      seats: 1,
      epsilon: o.epsilon ?? '1',
      neighbour: 'replace-one',
      opensAt,
      closesAt: new Date(opensAt.getTime() + (o.closesInHours ?? 7 * 24) * 3600_000),
      timeZone: 'Europe/London',
      publishTurnout: false,
      retentionDays: null,
      expectedVoters: null,
      rosterId,
    },
  });
  if (o.open ?? true) await openElection(ctx, { electionId, organiserId, mode: opensAt > now ? 'schedule' : 'now' });
  return electionId;
}

/** The ballot code in an invitation's text (the indented line after "Your ballot code:"). */
export function codeIn(text: string): string | null {
  return /Your ballot code:\s+([0-9A-Z]{4}-[0-9A-Z]{4}-[0-9A-Z]{4}-[0-9A-Z]{5})/.exec(text)?.[1] ?? null;
}
