import { describe, expect, it } from 'vitest';
import { InvalidInput } from '../../../src/errors.ts';
import { checkDraft, labelKey, type DraftInput } from '../../../src/elections/draft.ts';

const good: DraftInput = {
  title: 'Name the new boat',
  description: '',
  options: [
    { label: 'Heron', description: '' },
    { label: 'Otter', description: '' },
  ],
  seats: 1,
  epsilon: '1',
  neighbour: 'replace-one',
  opensAt: new Date('2026-06-10T08:00:00Z'),
  closesAt: new Date('2026-06-12T17:00:00Z'),
  timeZone: 'Europe/London',
  publishTurnout: false,
  retentionDays: null,
  expectedVoters: 20,
};

const issuesOf = (d: Partial<DraftInput>) => {
  try {
    checkDraft({ ...good, ...d });
    return [];
  } catch (e) {
    if (!(e instanceof InvalidInput)) throw e;
    return e.issues.map((i) => i.path);
  }
};

describe('checkDraft', () => {
  it('accepts a good draft and trims text', () => {
    const d = checkDraft({
      ...good,
      title: '  Boat  ',
      options: [
        { label: ' Heron ', description: ' ' },
        { label: 'Otter', description: '' },
      ],
    });
    expect(d.title).toBe('Boat');
    expect(d.options[0]).toEqual({ label: 'Heron', description: '' });
  });

  it.each([
    [{ title: '' }, 'title'],
    [{ title: 'x'.repeat(201) }, 'title'],
    [{ options: [{ label: 'Heron', description: '' }] }, 'options'],
    [{ options: Array.from({ length: 101 }, (_, i) => ({ label: `Option ${i}`, description: '' })) }, 'options'],
    [
      {
        options: [
          { label: 'Heron', description: '' },
          { label: 'HERON ', description: '' },
        ],
      },
      'options.1.label',
    ],
    [{ seats: 2 }, 'seats'],
    [{ seats: 0 }, 'seats'],
    [{ seats: 1.5 }, 'seats'],
    [{ epsilon: '0' }, 'epsilon'],
    [{ epsilon: '10.00001' }, 'epsilon'],
    [{ closesAt: new Date('2026-06-10T08:00:00Z') }, 'closesAt'],
    [{ timeZone: 'Nowhere/Land' }, 'timeZone'],
    [{ retentionDays: 0 }, 'retentionDays'],
    [{ retentionDays: 91 }, 'retentionDays'],
    [{ expectedVoters: 0 }, 'expectedVoters'],
  ])('refuses %j at %s', (d, path) => {
    expect(issuesOf(d as Partial<DraftInput>)).toContain(path);
  });

  it('allows exactly the limits', () => {
    expect(issuesOf({ epsilon: '0.01' })).toEqual([]);
    expect(issuesOf({ epsilon: '10' })).toEqual([]);
    expect(issuesOf({ retentionDays: 1 })).toEqual([]);
    expect(issuesOf({ retentionDays: 90 })).toEqual([]);
    expect(issuesOf({ options: Array.from({ length: 100 }, (_, i) => ({ label: `Option ${i}`, description: '' })), seats: 99 })).toEqual([]);
  });

  it('compares labels trimmed and case-insensitively', () => {
    expect(labelKey(' Kingfisher ')).toBe(labelKey('KINGFISHER'));
    expect(labelKey('Otter')).not.toBe(labelKey('Otters'));
  });
});
