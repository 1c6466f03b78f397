import { VeiltallyError } from '../errors.ts';

/**
 * Custody failures. Messages are safe for anyone to read: they never repeat the
 * passphrase, the code, the receipt or anything from inside a ballot.
 */

/** The tally passphrase did not unlock the election key; nothing was decrypted. */
export class WrongPassphrase extends VeiltallyError {
  readonly code = 'WrongPassphrase';
  override readonly status = 403;
  constructor() {
    super('That tally passphrase does not unlock this election. Check it and try again; it cannot be recovered.');
  }
}

/**
 * One or more sealed ballots failed to open or to decode. The tally stops: a ballot is
 * never skipped silently. `unreadable` says how many failed out of `examined`.
 */
export class BallotUnreadable extends VeiltallyError {
  readonly code = 'BallotUnreadable';
  override readonly status = 500;
  constructor(
    readonly unreadable = 1,
    readonly examined = 1,
  ) {
    super(`${unreadable} of ${examined} stored ballots could not be opened, so the tally was stopped and nothing was drawn.`);
  }
}

/** The code has the right shape but its check character does not match: almost surely a typing slip. */
export class CodeTypo extends VeiltallyError {
  readonly code = 'CodeTypo';
  override readonly status = 400;
  constructor() {
    super('That ballot code seems to have a typing mistake. Please compare it with your code, character by character.');
  }
}

/** Wrong length or characters that can never appear in a ballot code. */
export class CodeMalformed extends VeiltallyError {
  readonly code = 'CodeMalformed';
  override readonly status = 400;
  constructor() {
    super('That is not a ballot code. A code has 17 letters and digits, shown in groups.');
  }
}

/** Wrong length or characters for a receipt. */
export class ReceiptMalformed extends VeiltallyError {
  readonly code = 'ReceiptMalformed';
  override readonly status = 400;
  constructor() {
    super('That is not a receipt. A receipt has 10 letters and digits.');
  }
}

/** A stored wrapped key that does not have the expected shape (damaged or from an unknown version). */
export class WrappedKeyInvalid extends VeiltallyError {
  readonly code = 'WrappedKeyInvalid';
  override readonly status = 500;
  constructor() {
    super('The stored election key is damaged or of an unknown version.');
  }
}
