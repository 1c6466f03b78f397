import { VeiltallyError } from '../errors.ts';

/** Typed failures of organiser accounts. Messages never repeat a password. */

/**
 * One message for every failed sign-in, unknown email included, so the page does not
 * reveal which emails have accounts (OWASP Authentication Cheat Sheet, "Authentication and Error Messages").
 */
export class SignInFailed extends VeiltallyError {
  readonly code = 'SignInFailed';
  override readonly status = 401;
  constructor() {
    super('That email and password do not match an organiser account. Check both and try again.');
  }
}

/** The first organiser exists already; the setup page is used once. */
export class FirstRunDone extends VeiltallyError {
  readonly code = 'FirstRunDone';
  override readonly status = 409;
  constructor() {
    super('This site has already been set up. Sign in with an organiser account, or ask an organiser to add you.');
  }
}

export class EmailTaken extends VeiltallyError {
  readonly code = 'EmailTaken';
  override readonly status = 409;
  constructor() {
    super('There is already an organiser with that email.');
  }
}

/** Changing one's password needs the current one. */
export class WrongCurrentPassword extends VeiltallyError {
  readonly code = 'WrongCurrentPassword';
  override readonly status = 400;
  constructor() {
    super('That is not your current password. Type the password you signed in with.');
  }
}

export class OrganiserNotFound extends VeiltallyError {
  readonly code = 'OrganiserNotFound';
  override readonly status = 404;
  constructor() {
    super('We could not find that organiser. They may have been removed already.');
  }
}

/**
 * Organiser accounts (adding, removing, listing them) are for administrators, whom the operator
 * names from the command line. The same answer whatever the target, so it tells nothing about it.
 */
export class NotAdministrator extends VeiltallyError {
  readonly code = 'NotAdministrator';
  override readonly status = 403;
  constructor() {
    super(
      'Only an administrator of this site can add or remove organisers. Ask the person who runs the site: they name administrators from the command line.',
    );
  }
}

/** An administrator is removed only after the operator has made them an ordinary organiser again. */
export class CannotRemoveAdministrator extends VeiltallyError {
  readonly code = 'CannotRemoveAdministrator';
  override readonly status = 409;
  constructor() {
    super('That organiser is an administrator. The person who runs the site must first run `veiltally organiser demote` for them.');
  }
}

/** Removing an organiser must not leave an election nobody can run, nor hand it to whoever removed them. */
export class StillRunsElections extends VeiltallyError {
  readonly code = 'StillRunsElections';
  override readonly status = 409;
  constructor(readonly count: number) {
    super(
      `That organiser alone runs ${count} election${count === 1 ? '' : 's'} not yet published. They can share ${count === 1 ? 'it' : 'them'} with another organiser first; nobody else can see ${count === 1 ? 'it' : 'them'}.`,
    );
  }
}

/** An organiser cannot remove their own account, so a site is never left with nobody by accident. */
export class CannotRemoveYourself extends VeiltallyError {
  readonly code = 'CannotRemoveYourself';
  override readonly status = 409;
  constructor() {
    super('You cannot remove your own account. Ask another organiser to remove it.');
  }
}
