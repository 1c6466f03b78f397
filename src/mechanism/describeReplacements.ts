import type { Bounds } from './bounds.ts';
import { decimalWithPrecision } from './decimal.ts';
import { sumEpsilons } from './ledger.ts';
import { factorAtMost } from './statement.ts';

const Decimal = decimalWithPrecision(40);

/**
 * Replacement codes (DEVELOPERS.md, "Replacement codes"). A roster member who lost their code can
 * have one replacement mailed; the lost code is not withdrawn, because nothing stored pairs an
 * address with a code, so that member holds two codes and could cast two ballots.
 *
 * Group privacy (Dwork & Roth 2014, Theorem 2.2, from memory: an ε-differentially private mechanism
 * is kε-differentially private for groups of size k): a member whose data is 1 + r ballots is
 * protected at (1 + r)·ε. With r at most REPLACEMENTS_PER_MEMBER = 1 that is 2ε, twice the
 * cost of the ballot's own protection, for how they ticked and for whether they voted.
 *
 * Accuracy: each ballot adds at most 1 to each approval count, so R replacements can add at most R
 * to any count over what one ballot per member would give; every margin of the guarantee widens by
 * at most R (if c = t + e with 0 ≤ e ≤ R, then c_w ≥ max c − x implies t_w ≥ max t − x − R).
 *
 * Pure wording; describeStatement and describeParties call it, the tests read it from the public's side.
 */
export const REPLACEMENTS_PER_MEMBER = 1;

/** ε for a member holding 1 + REPLACEMENTS_PER_MEMBER codes, exact. */
function widened(epsilon: string): string {
  return sumEpsilons(Array.from({ length: 1 + REPLACEMENTS_PER_MEMBER }, () => epsilon));
}

export interface ReplacementPrivacy {
  howVoted: string;
  whetherVoted: string | null;
}

function twoCodes(p: ReplacementPrivacy): string {
  const how = widened(p.howVoted);
  const whether = p.whetherVoted === null ? null : widened(p.whetherVoted);
  const whetherText = whether === null ? '' : `, and whether they voted by ${factorAtMost(whether)} (ε = ${whether})`;
  return `what they ticked could at most multiply or divide the chance of any announced result by ${factorAtMost(how)} (ε = ${how}, twice the single-code figure: the guarantee for a group of two ballots)${whetherText}`;
}

/** Before voting, for a roster election: the rule, and what it costs those who use it. */
export function replacementPolicySentence(p: ReplacementPrivacy): string {
  return (
    `Lost codes: a member who lost their code can have ${REPLACEMENTS_PER_MEMBER === 1 ? 'one replacement' : `${REPLACEMENTS_PER_MEMBER} replacements`} mailed from the ballot page. ` +
    'The lost code is not switched off, since nothing stored says which code went to whom, so that member holds two codes and could cast two ballots. ' +
    `For a member who casts with both, ${twoCodes(p)}; and each replacement could add one ballot to the counts. The privacy ledger charges each member for one code. The result says how many replacements were sent.`
  );
}

/** With the result: R replacements were sent (granted; each mailed at most once in working form). */
export function replacementPrivacySentence(replacements: number, p: ReplacementPrivacy): string {
  if (replacements === 0) return 'No replacement codes were sent for this vote, so no member held more than one code.';
  const r = replacements === 1 ? '1 replacement code was' : `${replacements} replacement codes were`;
  return (
    `${r} sent to members who asked for one (at most ${REPLACEMENTS_PER_MEMBER} each), and a lost code still works, ` +
    `so up to ${replacements} ${replacements === 1 ? 'member' : 'members'} could have cast two ballots. For a member who did, ${twoCodes(p)}.`
  );
}

/** The accuracy guarantee measured against one ballot per member, when R replacements were sent. */
export function replacementBoundsSentence(replacements: number, b: Bounds): string | null {
  if (replacements === 0) return null;
  const within = new Decimal(b.withinApprovals).plus(replacements).toString();
  const lead = b.marginFor['0.95'] + replacements;
  return (
    `Up to ${replacements} of the ballots counted could be second ballots from members holding a replacement code, so each approval count may exceed its one-ballot-per-member value by up to ${replacements}. ` +
    `Measured with one ballot per member, the guarantee is ${within} approvals instead of ${b.withinApprovals}, and a lead of ${lead} approvals gives the 95% chance.`
  );
}
