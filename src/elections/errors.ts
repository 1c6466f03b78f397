import { VeiltallyError } from '../errors.ts';

/** Typed failures of election use-cases. Messages never carry codes, receipts, ballots or counts. */

export class ElectionNotFound extends VeiltallyError {
  readonly code = 'ElectionNotFound';
  override readonly status = 404;
  constructor() {
    super('We could not find that election.');
  }
}

export type NotOpenReason = 'not-yet-open' | 'closed' | 'draft';

const NOT_OPEN: Record<NotOpenReason, string> = {
  'not-yet-open': 'Voting in this election has not started yet.',
  closed: 'Voting in this election has closed.',
  draft: 'This election has not been opened for voting.',
};

export class ElectionNotOpen extends VeiltallyError {
  readonly code = 'ElectionNotOpen';
  override readonly status = 409;
  constructor(readonly reason: NotOpenReason) {
    super(NOT_OPEN[reason]);
  }
}

/** The tally was asked for while voting is still going on. */
export class ElectionStillOpen extends VeiltallyError {
  readonly code = 'ElectionStillOpen';
  override readonly status = 409;
  constructor() {
    super('Voting is still open. The tally can start once the election has closed.');
  }
}

export class CodeUnknown extends VeiltallyError {
  readonly code = 'CodeUnknown';
  override readonly status = 404;
  constructor() {
    super('That ballot code is not valid for this election.');
  }
}

export class CodeAlreadySpent extends VeiltallyError {
  readonly code = 'CodeAlreadySpent';
  override readonly status = 409;
  constructor() {
    super('That ballot code has already been used to vote.');
  }
}

export class CodeRevoked extends VeiltallyError {
  readonly code = 'CodeRevoked';
  override readonly status = 410;
  constructor() {
    super('That ballot code was withdrawn by the organiser. Please ask them for a new one.');
  }
}

/** Approvals that are not distinct option positions of this election. */
export class InvalidBallot extends VeiltallyError {
  readonly code = 'InvalidBallot';
  override readonly status = 422;
  constructor() {
    super('That ballot does not match the options of this election.');
  }
}

/** The draw happens once; a second tally would let an organiser re-roll the result. */
export class AlreadyTallied extends VeiltallyError {
  readonly code = 'AlreadyTallied';
  override readonly status = 409;
  constructor() {
    super('This election has already been tallied. The draw is made once and cannot be repeated.');
  }
}

/** A tally is already queued or running for this election. */
export class TallyInProgress extends VeiltallyError {
  readonly code = 'TallyInProgress';
  override readonly status = 409;
  constructor() {
    super('The result is already being drawn. It appears on the tally page within a few minutes.');
  }
}

/** Shredding before publication would let a draw vanish and be made again in a new election. */
export class ResultNotPublished extends VeiltallyError {
  readonly code = 'ResultNotPublished';
  override readonly status = 409;
  constructor() {
    super('This result has not been published yet. Every draw is published before its sealed ballots can be shredded.');
  }
}

export class NotTallied extends VeiltallyError {
  readonly code = 'NotTallied';
  override readonly status = 409;
  constructor() {
    super('This election has not been tallied yet, so there is no result to publish.');
  }
}

export class AlreadyPublished extends VeiltallyError {
  readonly code = 'AlreadyPublished';
  override readonly status = 409;
  constructor() {
    super('This result has already been published.');
  }
}

/** No tally key: the organiser has not set the tally passphrase yet. */
export class TallyKeyMissing extends VeiltallyError {
  readonly code = 'TallyKeyMissing';
  override readonly status = 409;
  constructor() {
    super('This election has no tally passphrase yet, so it cannot take ballots.');
  }
}

/** The key and ciphertexts were destroyed on purpose; nothing can be opened any more. */
export class BallotsShredded extends VeiltallyError {
  readonly code = 'BallotsShredded';
  override readonly status = 410;
  constructor() {
    super('The sealed ballots of this election have been shredded with their key file: this site can never open them again.');
  }
}

/** An action that does not fit the election's current state (e.g. issuing codes after close). */
export class ElectionStateConflict extends VeiltallyError {
  readonly code = 'ElectionStateConflict';
  override readonly status = 409;
  constructor(message: string) {
    super(message);
  }
}

/** Options, ε, seats and the privacy setting are promises to voters, fixed once voting opens. */
export class ElectionLocked extends VeiltallyError {
  readonly code = 'ElectionLocked';
  override readonly status = 409;
  constructor() {
    super(
      'This election has been opened, so its options, seats, ε and privacy setting are locked. ' +
        'Changing the rule after voting starts would break the promise made to voters.',
    );
  }
}

/** Opening needs at least one live ballot code, or nobody could vote. */
export class NoCodesIssued extends VeiltallyError {
  readonly code = 'NoCodesIssued';
  override readonly status = 409;
  constructor() {
    super('Issue at least one ballot code before opening: without a code, nobody can vote.');
  }
}

/** Opening would take the member group past its annual ε budget, and the configuration does not allow it. */
export class OverBudget extends VeiltallyError {
  readonly code = 'OverBudget';
  override readonly status = 409;
  constructor(groupName: string, projected: string, budget: string) {
    super(
      `Opening this election would bring “${groupName}” to ε = ${projected} for how members voted over 12 months, ` +
        `past the annual budget of ε = ${budget}. Wait until older draws leave the 12-month window, lower ε, ` +
        'or ask the operator to allow going over the budget (VEILTALLY_ALLOW_OVER_BUDGET).',
    );
  }
}

/**
 * Opening a roster election would take a member past the annual ε budget, counting every draw on
 * this instance over the same address (whatever roster it was on). Says only the most any member
 * would reach, not who nor how many.
 */
export class MemberOverBudget extends VeiltallyError {
  readonly code = 'MemberOverBudget';
  override readonly status = 409;
  constructor(projected: string, budget: string) {
    super(
      `Opening this election would bring a member of the roster to ε = ${projected} for how they voted over 12 months, ` +
        `past the annual budget of ε = ${budget}. Each member's spending counts every draw on this instance over their address, ` +
        'whatever roster it was on. Wait until older draws leave the 12-month window, lower ε, ' +
        'or ask the operator to allow going over the budget (VEILTALLY_ALLOW_OVER_BUDGET).',
    );
  }
}

/** A code batch asked for again that this election never issued (or of another size). */
export class CodeBatchUnknown extends VeiltallyError {
  readonly code = 'CodeBatchUnknown';
  override readonly status = 404;
  constructor() {
    super('Those ballot codes were not issued for this election, so there is nothing to download. Issue new codes instead.');
  }
}

/** A roster election needs at least one member to mail a code to. */
export class RosterEmpty extends VeiltallyError {
  readonly code = 'RosterEmpty';
  override readonly status = 409;
  constructor() {
    super('The roster of this election has no members, so nobody would get a code. Add members to the roster first, then open.');
  }
}

/**
 * The election's key file (the shred layer's key, kept outside the database) is not in the key
 * directory, or cannot be read. Nothing is cast, counted or changed. The message names no path:
 * the operator finds the file by the election id, which is in the address.
 */
export class ElectionKeyFileMissing extends VeiltallyError {
  readonly code = 'ElectionKeyFileMissing';
  override readonly status = 503;
  constructor(options?: { cause?: unknown }) {
    super(
      'This server cannot reach the key file of this election, so it can neither take nor count its ballots right now. Nothing was changed. The operator must restore the key directory (VEILTALLY_KEY_DIR) from its backup, or point this server at the directory the other servers use.',
      options,
    );
  }
}
