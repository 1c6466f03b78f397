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
