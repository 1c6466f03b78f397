/**
 * The draw rule for each seat:
 * - exponential: the exponential mechanism (McSherry & Talwar 2007), the default;
 * - permute-and-flip: McKenna & Sheldon 2020, the same ε, never a larger expected shortfall.
 */
export type DrawRule = 'exponential' | 'permute-and-flip';
export const DRAW_RULES: readonly DrawRule[] = ['exponential', 'permute-and-flip'];
export const DEFAULT_DRAW_RULE: DrawRule = 'exponential';

/** Plain words for members and organisers. */
export const RULE_NAMES: Readonly<Record<DrawRule, string>> = Object.freeze({
  exponential: 'the exponential mechanism',
  'permute-and-flip': 'permute-and-flip',
});

/** One sentence each, for the ballot page, the result page and the statement text. */
export const RULE_SENTENCES: Readonly<Record<DrawRule, string>> = Object.freeze({
  exponential:
    'Draw rule: the exponential mechanism. Each option’s chance grows with its approvals: every extra approval multiplies its weight in the draw by the same factor.',
  'permute-and-flip':
    'Draw rule: permute-and-flip. The options are put in a random order and each in turn is kept or passed over by a weighted coin; the most approved option is always kept when its turn comes, so on average the winner has at least as many approvals as under the exponential mechanism, with the same privacy.',
});
