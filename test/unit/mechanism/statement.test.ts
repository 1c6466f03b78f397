import { describe, expect, it } from 'vitest';
import {
  buildStatement,
  canonicalJson,
  canonicalStatementBytes,
  describeStatement,
  makeExponentialDraw,
  type Neighbour,
} from '../../../src/mechanism/index.ts';

// A rowing club naming its new boat (invented scenario).
const labels = ['Heron', 'Kingfisher', 'Otter', 'Swift'];
const make = (epsilon: string, seats = 1, neighbour: Neighbour = 'replace-one') => makeExponentialDraw({ epsilon, options: 4, seats, neighbour });

describe('buildStatement', () => {
  it('records the mechanism, ε as entered, neighbour, sensitivity, seats and bounds', () => {
    const draw = make('1.50');
    const s = buildStatement({ draw, optionLabels: labels, winners: [1], turnout: null, electionTitle: ' New boat ' });
    expect(s).toMatchObject({
      statementVersion: 1,
      electionTitle: 'New boat',
      outcome: 'winners',
      winners: ['Kingfisher'],
      optionLabels: labels,
      mechanism: 'exponential-mechanism',
      epsilon: '1.50',
      neighbour: 'replace-one',
      sensitivity: 1,
      seats: 1,
      composition: 'single-draw',
      perRoundEpsilon: '1.5',
      perRoundScale: '0.75',
      turnout: null,
      released: ['winners', 'option-labels', 'epsilon', 'bounds'],
      notReleased: ['approval-counts', 'ballots', 'turnout'],
    });
    expect(s.bounds).toEqual(draw.bounds(0.05));
    // e^1.5 = 4.4817 → 4.49: a factor is rounded up, never understated (decimal arithmetic). Whether a member voted
    // is a monotone change, ε/2 = 0.75 under replace-one (whetherVoted.test.ts): e^0.75 = 2.1170 → 2.12.
    expect(s.protects).toEqual({
      howVoted: { epsilon: '1.50', factorAtMost: 4.49 },
      whetherVoted: { epsilon: '0.75', factorAtMost: 2.12 },
    });
  });

  it('add-remove: ε for whether a member voted, 2ε for how they voted', () => {
    const s = buildStatement({ draw: make('1', 1, 'add-remove'), optionLabels: labels, winners: [0], turnout: null });
    // e^1 = 2.71828 → 2.72, e^2 = 7.38906 → 7.39.
    expect(s.protects).toEqual({
      whetherVoted: { epsilon: '1', factorAtMost: 2.72 },
      howVoted: { epsilon: '2', factorAtMost: 7.39 },
    });
    const text = describeStatement(s).paragraphs.join(' ');
    expect(text).toContain(
      'Whether any one member voted could at most have multiplied or divided the chance of this announcement by 2.72 (that is e^ε:',
    );
    expect(text).toContain('by 7.39 (that is e^(2ε): the number e ≈ 2.718 raised to the power 2ε');
    expect(text).toContain('one ballot removed and another added');
  });

  it('publishing turnout makes it exact and unprotected, and drops the "whether" guarantee', () => {
    const s = buildStatement({ draw: make('1'), optionLabels: labels, winners: [2], turnout: 23 });
    expect(s.turnout).toBe(23);
    expect(s.protects.whetherVoted).toBeNull();
    expect(s.released).toContain('turnout');
    expect(s.notReleased).not.toContain('turnout');
    const text = describeStatement(s).paragraphs.join(' ');
    expect(text).toContain('turnout is published as an exact count and is not protected');
    expect(text).toContain('23 ballots, exact');
  });

  it('multi-seat statements name the composition and per-round ε', () => {
    const s = buildStatement({ draw: make('1', 3), optionLabels: labels, winners: [3, 0, 1], turnout: null });
    expect(s).toMatchObject({ seats: 3, composition: 'basic', perRoundEpsilon: '1/3', winners: ['Swift', 'Heron', 'Kingfisher'] });
    const text = describeStatement(s);
    expect(text.headline).toBe('The 3 seats were drawn, in this order: Swift, Heron, Kingfisher.');
    expect(text.paragraphs.join(' ')).toContain('ε/3 = 1/3');
    expect(text.paragraphs.join(' ')).toContain(
      'the privacy costs of separate draws over the same people add up (the rule called basic composition)',
    );
    expect(text.boundsSentence).toMatch(/^The drawing method used here guarantees, for each seat, that with probability at least 95%/);
    // Union bound over the seats (Boole's inequality): 1 − kβ = 1 − 3 × 0.05.
    expect(text.boundsSentence).toContain(
      'For all 3 seats together, the same holds with probability at least 85%: each seat may miss with a chance of at most 5%, and 3 such chances add up to at most 15%.',
    );
  });

  it('does not promise to hide whether anyone voted at all: no ballots means no draw', () => {
    // Dwork & Roth 2014, Def. 2.4: for the neighbours "no ballot" and "one ballot", P(no-ballots outcome)
    // is 1 and 0 (closeAndTally draws only when ballots were cast), so no factor e^ε bounds that change.
    for (const neighbour of ['replace-one', 'add-remove'] as const) {
      const s = buildStatement({ draw: make('1', 1, neighbour), optionLabels: labels, winners: [0], turnout: null });
      expect(describeStatement(s).paragraphs.join(' ')).toContain('whether anyone voted at all');
    }
    const none = describeStatement(buildStatement({ draw: make('1'), optionLabels: labels, winners: null, turnout: null }));
    expect(none.paragraphs.join(' ')).not.toContain('Nothing about any member can be learned');
    expect(none.paragraphs.join(' ')).toContain('nobody voted');
  });

  it('add-remove over several seats: the composed total for what a member ticked is 2ε, not ε', () => {
    // Basic composition (Dwork & Roth 2014, Thm. 3.16) of k draws each costing 2ε/k for a changed ballot.
    const s = buildStatement({ draw: make('1.5', 3, 'add-remove'), optionLabels: labels, winners: [0, 1, 2], turnout: null });
    expect(describeStatement(s).paragraphs.join(' ')).toContain('For what a member ticked the total is 2ε = 3');
    const replace = buildStatement({ draw: make('1.5', 3), optionLabels: labels, winners: [0, 1, 2], turnout: null });
    expect(describeStatement(replace).paragraphs.join(' ')).not.toContain('2ε');
  });

  it('zero ballots: "no ballots cast; no winner drawn"', () => {
    const s = buildStatement({ draw: make('1'), optionLabels: labels, winners: null, turnout: 0 });
    expect(s.outcome).toBe('no-ballots');
    expect(s.winners).toEqual([]);
    const text = describeStatement(s);
    expect(text.headline).toBe('No ballots cast; no winner drawn.');
    expect(describeStatement(buildStatement({ draw: make('1'), optionLabels: labels, winners: null, turnout: null })).headline).toBe(
      'No ballots cast; no winner drawn.',
    );
  });
});

describe('describeStatement', () => {
  const s = buildStatement({ draw: make('1'), optionLabels: labels, winners: [0], turnout: null, electionTitle: 'New boat' });
  const text = describeStatement(s);

  it('gives the plain-language privacy sentence for ε = 1: the factor 2.72 first, then what e^ε means', () => {
    expect(text.headline).toBe('New boat: Heron was drawn as the winner.');
    expect(text.paragraphs.join(' ')).toContain(
      'Here the privacy setting, written ε (epsilon), is 1: the smaller it is, the more strongly each ballot is protected. ' +
        'Whatever any one member ticked could at most have multiplied or divided the chance of this announcement by 2.72 ' +
        '(that is e^ε: the number e ≈ 2.718 raised to the power ε; the nearer to 1, the stronger the protection, and 1 would mean no effect at all).',
    );
    expect(text.paragraphs.join(' ')).toContain('Never published: how many approvals any option received, any ballot or the turnout.');
  });

  it('states the bounds in words, with the figures from the statement', () => {
    expect(text.boundsSentence).toContain('at least 95%');
    expect(text.boundsSentence).toContain(`minus ${s.bounds.withinApprovals}`);
    expect(text.boundsSentence).toContain(`at least ${s.bounds.marginFor['0.95']} approvals`);
  });

  it('carries the caution: random, weighted, adopted before voting, bylaws and law, not for public elections', () => {
    expect(text.caution).toContain('drawn at random, weighted toward the most approved options');
    expect(text.caution).toContain('chance plays a larger part');
    expect(text.caution).toContain('must adopt before voting');
    expect(text.caution).toContain('bylaws and local election law');
    expect(text.caution).toContain('not for public or government elections');
  });
});

describe('canonicalStatementBytes', () => {
  it('sorts keys at every depth and drops whitespace (after RFC 8785)', () => {
    expect(canonicalJson({ b: 1, a: [true, null, 'x', { d: 2, c: 1.5 }] })).toBe('{"a":[true,null,"x",{"c":1.5,"d":2}],"b":1}');
  });

  it('is deterministic and round-trips to the same statement', () => {
    const s = buildStatement({ draw: make('0.8'), optionLabels: labels, winners: [2], turnout: 12 });
    const shuffled = Object.fromEntries(Object.entries(s).reverse()) as typeof s;
    const bytes = canonicalStatementBytes(s);
    expect(Buffer.from(canonicalStatementBytes(shuffled)).equals(Buffer.from(bytes))).toBe(true);
    expect(JSON.parse(new TextDecoder().decode(bytes))).toEqual(s);
  });

  it.each([[Number.NaN], [Infinity], [1n], [() => 1]])('refuses a value JSON cannot hold exactly (%s)', (value) => {
    expect(() => canonicalJson({ value })).toThrow(TypeError);
  });
});
