/**
 * The privacy factor in plain words first, the symbol explained where it appears: an ε-differentially
 * private draw can multiply or divide the chance of any result by at most e^ε when one ballot changes
 * (Dwork & Roth 2014, Def. 2.4; the bound holds both ways, since the neighbours are symmetric).
 * `power` is what e is raised to: ε, or 2ε for what a member ticked under add-or-remove neighbours.
 */
export function factorExplained(factor: number, power: 'ε' | '2ε' | 'ε/2'): string {
  const symbol = power === 'ε' ? 'e^ε' : `e^(${power})`;
  return `${factor} (that is ${symbol}: the number e ≈ 2.718 raised to the power ${power}; the nearer to 1, the stronger the protection, and 1 would mean no effect at all)`;
}

/** The rule that privacy costs of separate draws add up, named once in plain words. */
export const COSTS_ADD_UP = 'the privacy costs of separate draws over the same people add up (the rule called basic composition)';
