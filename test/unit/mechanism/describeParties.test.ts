import { describe, expect, it } from 'vitest';
import { describeBounds, describeParties, makeExponentialDraw } from '../../../src/mechanism/index.ts';

/**
 * The statement's sentences for every combination of settings, party by party. Factors are
 * e^ε (replace one ballot) and e^(2ε) for what a member ticked under add/remove (a changed ballot
 * is one removal and one addition; Dwork & Roth 2014, Def. 2.4 and Thm. 3.10), and e^(ε/2) for whether a member
 * voted under replace-one (a monotone change; whetherVoted.test.ts), rounded up to two decimals: e^1 = 2.71828…,
 * e^2 = 7.38905…, e^0.5 = 1.64872…, e^0.25 = 1.28402…, e^(1/3) = 1.39561….
 */
const cases = [
  { epsilon: '1', neighbour: 'replace-one', how: '2.72 (that is e^ε:', whether: '1.65 (that is e^(ε/2):' },
  { epsilon: '1', neighbour: 'add-remove', how: '7.39 (that is e^(2ε):', whether: '2.72 (that is e^ε:' },
  { epsilon: '0.5', neighbour: 'replace-one', how: '1.65 (that is e^ε:', whether: '1.29 (that is e^(ε/2):' },
  { epsilon: '0.5', neighbour: 'add-remove', how: '2.72 (that is e^(2ε):', whether: '1.65 (that is e^ε:' },
] as const;

const table = cases.flatMap((c) =>
  [1, 3].flatMap((seats) =>
    [false, true].flatMap((publishTurnout) => [24, 48].map((previewHours) => ({ ...c, seats, publishTurnout, previewHours }))),
  ),
);

describe('what each party can learn, for every combination of settings', () => {
  it.each(table)('ε=$epsilon $neighbour, $seats seat(s), turnout published: $publishTurnout, preview $previewHours h', (c) => {
    const draw = makeExponentialDraw({ epsilon: c.epsilon, options: 5, seats: c.seats, neighbour: c.neighbour });
    const parts = describeParties(draw.privacy, { neighbour: c.neighbour, publishTurnout: c.publishTurnout, previewHours: c.previewHours });
    expect(parts.map((p) => p.party)).toEqual(['members', 'public', 'organiser', 'operator']);
    const [members, pub, org, operator] = parts.map((p) => p.sentences.join(' ')) as [string, string, string, string];

    // Members: what the public learns, plus their own receipt, which shows nothing of the vote.
    expect(members).toContain('exactly what the public learns');
    expect(members).toContain('does not show how you voted');
    // The receipt is private from the organiser and the public, not from whoever runs the site.
    expect(members).not.toContain('only you');
    expect(members).toContain('The organiser and the public never see your receipt');
    expect(members).toContain('Whoever runs this site does');

    // The operator: trusted, and what they see live and at rest, whatever the settings.
    expect(operator).toContain('not against them');
    expect(operator).toContain('how many ballots have been cast at any moment');
    expect(operator).toContain('the database’s own transaction ids pair them');
    expect(operator).toContain('network address of every request');
    expect(operator).toContain('someone in control of the server then could read every ballot');

    // The public: how, whether, live, anyone at all, and that every draw is published.
    // Plain words first ("multiply or divide the chance … by 2.72"), the symbol explained where it appears.
    expect(pub).toContain(
      `with the privacy setting at ε = ${c.epsilon}, whatever one member ticks can at most multiply or divide the chance of any announced result by ${c.how}`,
    );
    expect(pub).toContain('the number e ≈ 2.718 raised to the power');
    if (c.publishTurnout) {
      expect(pub).toContain('exact number of ballots is published and is not protected');
      expect(pub).not.toContain('The turnout is never published');
    } else {
      const whetherSentence = pub.split('Whether a member voted:')[1] ?? '';
      expect(whetherSentence).toContain(`multiply or divide the chance of any announced result by ${c.whether}`);
      expect(whetherSentence).toContain('The turnout is never published.');
      expect(pub).toContain(
        c.neighbour === 'replace-one'
          ? 'not voting looks the same as a ballot with nothing ticked'
          : 'Whether a member voted: voting or not can at most multiply',
      );
    }
    expect(pub).toContain('nothing about who has voted, or how many, is shown');
    expect(pub).toContain('Whether anyone voted at all is shown');
    expect(pub).toContain(`at the latest ${c.previewHours} hours after the draw`);

    // The organiser: never counts, never a live count, the code probe stated plainly, and where it learns more.
    expect(org).toContain('never a count of approvals');
    expect(org).toContain(`up to ${c.previewHours} hours before they are published`);
    expect(org).toContain('never how many ballots were cast');
    expect(org).toContain('casting with it uses it up');
    expect(org).toContain(c.publishTurnout ? 'exact turnout in the preview' : 'never shown the turnout');
    expect(org).toContain('Whether anyone voted at all');

    // No sentence anywhere promises that turnout is hidden when it is published.
    if (c.publishTurnout) for (const text of [members, pub, org]) expect(text).not.toContain('never published');
  });
});

describe('the accuracy sentence with k seats gives the all-seats guarantee as a property of the method', () => {
  it.each([1, 2, 3, 10, 20, 25])('%i seat(s)', (seats) => {
    const draw = makeExponentialDraw({ epsilon: '1', options: 30, seats, neighbour: 'replace-one' });
    const b = draw.bounds(0.05);
    for (const tense of ['past', 'future'] as const) {
      const text = describeBounds(b, seats, tense);
      expect(text).toMatch(/^The drawing method (used here )?guarantees/);
      expect(text).not.toMatch(/the winner had|was drawn with/);
      // Union bound (Boole's inequality): P(every seat within the margin) ≥ 1 − kβ.
      if (seats === 1) expect(text).not.toContain('seats together');
      else if (seats < 20)
        expect(text).toContain(
          `For all ${seats} seats together, the same holds with probability at least ${Math.round((1 - seats * 0.05) * 100)}%: each seat may miss with a chance of at most 5%, and ${seats} such chances add up to at most ${Math.round(seats * 5)}%.`,
        );
      else
        expect(text).toContain(
          `no useful guarantee at this level: a chance of at most 5% of missing for each seat, added over ${seats} seats, reaches 100%`,
        );
      // No symbol or theorem name is left undefined in the member's sentence.
      expect(text).not.toMatch(/β|union bound/);
    }
  });
});

describe('what the privacy ledger tells each party', () => {
  const privacy = makeExponentialDraw({ epsilon: '1', options: 3, seats: 1, neighbour: 'replace-one' }).privacy;
  it('describes the ledger, and what the operator sees of each electorate kind, only when the electorate is known', () => {
    const base = { neighbour: 'replace-one', publishTurnout: false, previewHours: 48 } as const;
    const unknown = Object.fromEntries(describeParties(privacy, base).map((p) => [p.party, p.sentences.join(' ')]));
    expect(Object.keys(unknown)).toEqual(['members', 'public', 'organiser', 'operator']);
    expect(unknown.operator).not.toMatch(/invitations|Printed codes|ledger/);
    const roster = describeParties(privacy, { ...base, electorate: 'roster' });
    expect(roster.map((p) => p.party)).toEqual(['members', 'public', 'organiser', 'operator']);
    const text = Object.fromEntries(roster.map((p) => [p.party, p.sentences.join(' ')]));
    expect(text.public).toContain('the most any one member has spent over 12 months');
    expect(text.organiser).toContain('one real address');
    expect(text.operator).toContain('holds the key the addresses are hashed under');
    expect(text.operator).toContain('The invitations:');
    expect(text.operator).not.toContain('Printed codes');
    const printed = Object.fromEntries(describeParties(privacy, { ...base, electorate: 'printed' }).map((p) => [p.party, p.sentences.join(' ')]));
    expect(printed.public).toContain("the organiser's own member group");
    expect(printed.operator).toContain('holds nothing about any member');
    expect(printed.operator).toContain('Printed codes: the site never learns who holds which code');
    expect(printed.operator).not.toContain('invitations');
  });
});
