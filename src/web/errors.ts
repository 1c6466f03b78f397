import { VeiltallyError } from '../errors.ts';

/** Web-only failures. Domain errors live beside their use-cases. */
export class Forbidden extends VeiltallyError {
  readonly code = 'Forbidden';
  override readonly status = 403;
}

export class CsrfRejected extends VeiltallyError {
  readonly code = 'CsrfRejected';
  override readonly status = 403;
  constructor() {
    super('This form had expired or was not sent by this site. Go back, reload the page and try again.');
  }
}

export class TooManyAttempts extends VeiltallyError {
  readonly code = 'TooManyAttempts';
  override readonly status = 429;
  constructor(
    what: string,
    readonly retryAfterMs?: number,
  ) {
    super(`Too many ${what} in a short time. ${waitText(retryAfterMs)}`);
  }
}

export class PayloadTooLarge extends VeiltallyError {
  readonly code = 'PayloadTooLarge';
  override readonly status = 413;
  constructor() {
    super('That form was larger than we accept. Shorten it and send it again.');
  }
}

/** A form body the server cannot read (an unsupported charset, a malformed body): the client's fault, not ours. */
export class UnreadableForm extends VeiltallyError {
  readonly code = 'UnreadableForm';
  override readonly status: number;
  constructor(status: number) {
    super('We could not read that form. Go back, reload the page and send it again.');
    this.status = status;
  }
}

/** A path with broken percent-encoding, or a field holding a character no database column can store (NUL). */
export class UnreadableRequest extends VeiltallyError {
  readonly code = 'UnreadableRequest';
  override readonly status = 400;
  constructor(what: 'address' | 'form') {
    super(
      what === 'address'
        ? 'That address is not one we can read. Check the link and try again.'
        : 'That form held a character we cannot store (a NUL byte). Remove it and send the form again.',
    );
  }
}

function waitText(ms: number | undefined): string {
  if (ms === undefined || !Number.isFinite(ms) || ms <= 0) return 'Wait a few minutes, then try again.';
  const minutes = Math.ceil(ms / 60_000);
  if (ms < 60_000) return `Wait ${Math.ceil(ms / 1000)} seconds, then try again.`;
  return `Wait ${minutes} minute${minutes === 1 ? '' : 's'}, then try again.`;
}

/**
 * A cast sent after the member's step cookie lapsed (routes/vote/stepCookie.ts): the code and ticks
 * are gone from this browser, so nothing can be cast; the member starts again from their code.
 */
export class VoteStepLapsed extends VeiltallyError {
  readonly code = 'VoteStepLapsed';
  override readonly status = 409;
  constructor() {
    super('Nothing was cast just now: this browser had forgotten your code and choices, because the page was left open too long.');
  }
}
