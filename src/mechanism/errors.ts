import { VeiltallyError } from '../errors.ts';

/** ε text that is not a plain decimal in the allowed range. */
export class InvalidEpsilon extends VeiltallyError {
  readonly code = 'InvalidEpsilon';
  override readonly status = 400;
}

/** A mechanism set up with values it cannot honour (options, seats, neighbour, β, labels). */
export class InvalidMechanismConfig extends VeiltallyError {
  readonly code = 'InvalidMechanismConfig';
  override readonly status = 400;
}

/** Scores handed to a draw that do not fit its configuration. */
export class InvalidScores extends VeiltallyError {
  readonly code = 'InvalidScores';
  override readonly status = 400;
}

/** Shortens user text before it is echoed in a message, so errors stay one short line. */
export function quoteForMessage(value: unknown): string {
  if (typeof value !== 'string') return typeof value;
  const shown = value.length > 24 ? `${value.slice(0, 24)}…` : value;
  return JSON.stringify(shown);
}
