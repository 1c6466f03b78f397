import { describe, expect, it } from 'vitest';
import { canCloseEarly, canTally, electionStatus, isEditable } from '../../../src/elections/status.ts';
import type { ElectionState } from '../../../src/elections/electionRepo.ts';

const opensAt = new Date('2026-06-10T09:00:00Z');
const closesAt = new Date('2026-06-12T17:00:00Z');
const at = (iso: string) => new Date(iso);
const e = (state: ElectionState) => ({ state, opensAt, closesAt });

describe('electionStatus', () => {
  it.each([
    ['draft', '2026-06-11T00:00:00Z', 'draft'],
    ['open', '2026-06-10T08:59:59Z', 'scheduled'],
    // Boundaries follow acceptsBallotsAt: [opensAt, closesAt).
    ['open', '2026-06-10T09:00:00Z', 'open'],
    ['open', '2026-06-12T16:59:59Z', 'open'],
    ['open', '2026-06-12T17:00:00Z', 'voting-ended'],
    ['closed', '2026-06-11T00:00:00Z', 'voting-ended'],
    ['tallied', '2026-06-13T00:00:00Z', 'tallied'],
    ['published', '2026-06-13T00:00:00Z', 'published'],
  ] as const)('%s at %s is %s', (state, now, status) => {
    expect(electionStatus(e(state), at(now))).toBe(status);
  });
});

describe('what the organiser may do', () => {
  it('edits only drafts', () => {
    expect(isEditable(e('draft'))).toBe(true);
    for (const s of ['open', 'closed', 'tallied', 'published'] as const) expect(isEditable(e(s))).toBe(false);
  });

  it('tallies only once voting has ended', () => {
    expect(canTally(e('open'), at('2026-06-11T00:00:00Z'))).toBe(false);
    expect(canTally(e('open'), at('2026-06-12T17:00:00Z'))).toBe(true);
    expect(canTally(e('closed'), at('2026-06-11T00:00:00Z'))).toBe(true);
    expect(canTally(e('tallied'), at('2026-06-13T00:00:00Z'))).toBe(false);
    expect(canTally(e('draft'), at('2026-06-13T00:00:00Z'))).toBe(false);
  });

  it('closes early only while ballots could still arrive', () => {
    expect(canCloseEarly(e('open'), at('2026-06-09T00:00:00Z'))).toBe(true);
    expect(canCloseEarly(e('open'), at('2026-06-11T00:00:00Z'))).toBe(true);
    expect(canCloseEarly(e('open'), at('2026-06-12T18:00:00Z'))).toBe(false);
    expect(canCloseEarly(e('closed'), at('2026-06-11T00:00:00Z'))).toBe(false);
    expect(canCloseEarly(e('draft'), at('2026-06-11T00:00:00Z'))).toBe(false);
  });
});
