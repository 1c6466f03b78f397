import { describe, expect, it } from 'vitest';
import { draftFromValues, readElectionForm } from '../../../src/web/routes/organise/electionSchema.ts';
import { electionFormView, fieldAnchor } from '../../../src/web/presenters/electionForm.ts';
import { DRAW_RULES } from '../../../src/mechanism/index.ts';

const body = (over: Record<string, unknown> = {}) => ({
  title: 'Choir programme',
  description: '',
  optionLabel: ['Bach', '', 'Brahms', 'Britten'],
  optionDescription: ['', '', '', ''],
  seats: '2',
  epsilon: '1.5',
  neighbour: 'replace-one',
  expectedVoters: '30',
  timeZone: 'America/New_York',
  opensAt: '2026-11-01T01:30',
  closesAt: '2026-11-02T12:00',
  publishTurnout: 'no',
  retention: 'shred',
  retentionDays: '30',
  ...over,
});

describe('the election form', () => {
  it('skips blank rows and converts wall-clock times in the chosen zone', () => {
    const { draft, errors, ambiguous } = draftFromValues(readElectionForm(body()));
    expect(errors).toEqual({});
    expect(draft!.options.map((o) => o.label)).toEqual(['Bach', 'Brahms', 'Britten']);
    // 01:30 on 1 Nov 2026 happens twice in New York (tzdata: Rule US 2007 max Nov Sun>=1 2:00): the first is EDT, 05:30 UTC.
    expect(draft!.opensAt.toISOString()).toBe('2026-11-01T05:30:00.000Z');
    expect(ambiguous).toEqual(['opensAt']);
  });

  it('maps option errors back to the row they were typed in', () => {
    const { errors } = draftFromValues(readElectionForm(body({ optionLabel: ['Bach', '', 'Brahms', 'bach '] })));
    expect(errors['options.3.label']).toContain('repeats option 1');
    expect(fieldAnchor('options.3.label')).toBe('option-4-label');
  });

  it('reads a single option as a one-element list and bounds the row count', () => {
    expect(readElectionForm(body({ optionLabel: 'Only', optionDescription: 'One' })).options).toEqual([{ label: 'Only', description: 'One' }]);
    const many = readElectionForm(body({ optionLabel: Array(500).fill('x'), optionDescription: [] }));
    expect(many.options.length).toBe(120);
    expect(draftFromValues(many).errors.options).toContain('at most 100');
  });

  it('treats unknown radio values as the safe default', () => {
    const v = readElectionForm(body({ neighbour: 'something', publishTurnout: 'maybe', retention: 'forever' }));
    expect(v).toMatchObject({ neighbour: 'replace-one', publishTurnout: 'no', retention: 'shred' });
  });

  it('offers one radio button per rule of the registry, the chosen one checked, an unknown rule read as the default', () => {
    const checkedFor = (rule: string) =>
      electionFormView({ electionId: null, values: readElectionForm(body({ rule })), maxRows: 120 })
        .ruleChoices.filter((c) => c.checked)
        .map((c) => c.id);
    const choices = electionFormView({ electionId: null, values: readElectionForm(body()), maxRows: 120 }).ruleChoices;
    expect(choices.map((c) => c.id)).toEqual([...DRAW_RULES]);
    for (const rule of DRAW_RULES) expect(checkedFor(rule)).toEqual([rule]);
    expect(checkedFor('coin')).toEqual([DRAW_RULES[0]]);
  });

  it('adds spare rows on request, never beyond the maximum', () => {
    const v = readElectionForm(body());
    expect(electionFormView({ electionId: null, values: v, addRows: 5, maxRows: 120 }).values.options).toHaveLength(9);
    expect(electionFormView({ electionId: null, values: v, addRows: 500, maxRows: 120 }).values.options).toHaveLength(120);
    expect(electionFormView({ electionId: null, values: v, addRows: 500, maxRows: 120 }).canAddRows).toBe(false);
  });

  it('keeps a stored zone selectable even when the list names it differently', () => {
    const v = { ...readElectionForm(body()), timeZone: 'Asia/Calcutta' };
    const zones = electionFormView({ electionId: null, values: v, maxRows: 120 }).zones;
    expect(zones[0]).toBe('Asia/Calcutta');
    expect(zones).toContain('Asia/Kolkata');
  });
});
