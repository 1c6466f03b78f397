import { InvalidInput, VeiltallyError } from '../errors.ts';

/** A roster that is missing or not this organiser's: the same answer, so ids cannot be probed. */
export class RosterNotFound extends VeiltallyError {
  readonly code = 'RosterNotFound';
  override readonly status = 404;
  constructor() {
    super('We could not find that roster.');
  }
}

/** One row of an import that cannot be taken, by its line in the file (1 is the first line). */
export interface RosterRowError {
  line: number;
  message: string;
}

/** An import refused as a whole: nothing was added, and every bad row is listed. */
export class RosterImportRejected extends InvalidInput {
  override readonly code = 'InvalidInput';
  constructor(readonly rows: readonly RosterRowError[]) {
    super(`Nothing was imported: ${rows.length === 1 ? 'one row needs' : `${rows.length} rows need`} correcting first.`, [
      { path: 'csv', message: 'Correct the rows listed below, then import again. Nothing was added.' },
    ]);
  }
}

/** The roster's members are fixed while an election using it is open or waiting for its draw. */
export class RosterFrozen extends VeiltallyError {
  readonly code = 'RosterFrozen';
  override readonly status = 409;
  constructor(titles: readonly string[]) {
    super(
      `The members of this roster cannot change while “${titles.join('”, “')}” ${titles.length === 1 ? 'is' : 'are'} open or waiting for the draw: ` +
        'every member was sent a code and the draw is charged to each of them. Change the roster after the draw.',
    );
  }
}

/** A roster cannot be deleted while an election that is not yet published uses it. */
export class RosterInUse extends VeiltallyError {
  readonly code = 'RosterInUse';
  override readonly status = 409;
  constructor(titles: readonly string[]) {
    super(
      `This roster is the electorate of “${titles.join('”, “')}”, not yet published. ` +
        'Choose printed codes or another roster on a draft, or wait until the result is published, then delete the roster.',
    );
  }
}
