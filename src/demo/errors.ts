import { VeiltallyError } from '../errors.ts';

/** The database already holds elections of real organisers: sample data must never mix with them. */
export class DemoRefused extends VeiltallyError {
  readonly code = 'DemoRefused';
  override readonly status = 409;
  constructor() {
    super(
      'This database already holds real elections, so the sample elections were not added. ' +
        'Run the demo on a fresh data directory instead (for example VEILTALLY_DATA_DIR=./demo-data).',
    );
  }
}

/** Another request or process is still preparing the sample elections. */
export class DemoBusy extends VeiltallyError {
  readonly code = 'DemoBusy';
  override readonly status = 409;
  constructor() {
    super('The sample elections are still being prepared. Wait a minute, then try again.');
  }
}

/** An earlier run stopped halfway; its partial data stays, marked as demo, and nothing is added to it. */
export class DemoIncomplete extends VeiltallyError {
  readonly code = 'DemoIncomplete';
  override readonly status = 409;
  constructor() {
    super(
      'An earlier attempt to add the sample elections stopped halfway. Start again on a fresh data directory ' +
        '(stop the server, move the data directory aside, start again).',
    );
  }
}

/** The first-run button is offered only on a site that has no organiser of its own yet. */
export class DemoNotOffered extends VeiltallyError {
  readonly code = 'DemoNotOffered';
  override readonly status = 409;
  constructor() {
    super('Sample elections are offered only on a new site, before its first organiser account is created.');
  }
}
