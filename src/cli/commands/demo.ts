import { loadConfig } from '../../config.ts';
import { openConfiguredDatabase } from '../../db/configured.ts';
import { migrateLatest } from '../../db/migrate.ts';
import { seedDemo, type DemoSummary } from '../../demo/seedDemo.ts';
import { liveContext } from '../../elections/context.ts';
import { keyDirectory } from '../../keyfiles/keyDirectory.ts';
import { loadSecrets } from '../../secrets.ts';
import type { Command } from '../io.ts';

const usage = `Usage: veiltally demo

Adds two sample elections to the database the server uses (the embedded database in
VEILTALLY_DATA_DIR, default ./data, or DATABASE_URL), through the same steps an organiser
and members take, and prints their addresses:
  - an open election: a rowing club naming its new boat (40 codes issued, some used; a few unused
    codes are printed so you can vote);
  - a published result: a tenants' association choosing three repairs, with a receipt to check;
  - a demo organiser login, printed once.
Running it again adds nothing and prints the addresses again. It refuses a database that
holds real elections. Start the server with \`npm start\` to open the addresses.`;

/** What the newcomer reads: addresses first, then the login. */
export function demoText(s: DemoSummary, publicUrl: string): string {
  const lines = [
    s.created ? 'Sample elections added (demo data, made up).' : 'The sample elections were already here; nothing was added.',
    '',
    `Open election: ${s.open.title}`,
    `  6 options, 1 seat, ε = 1; ${s.open.codes} codes issued, some already used (an organiser is never told how many).`,
    `  Ballot:  ${publicUrl}/vote/${s.open.id}`,
    '  Unused codes you can vote with (one ballot each):',
    ...s.open.unusedCodes.map((c) => `    ${c}`),
    '',
    `Published result: ${s.published.title}`,
    `  8 options, 3 seats, ε = 1.5.`,
    `  Result:  ${publicUrl}/results/${s.published.id}`,
    `  A receipt to check on that page: ${s.published.receipt}`,
    `  Signed statement: ${publicUrl}/results/${s.published.id}/statement.json (check it with \`veiltally verify\`)`,
    ...(s.published.groupId ? [`  Privacy ledger of the tenants: ${publicUrl}/groups/${s.published.groupId}/ledger`] : []),
    '',
    'Demo organiser (a sample login, marked "demo" on every page):',
    `  Sign in: ${publicUrl}/organise/sign-in`,
    `  Email:    ${s.organiser.email}`,
    s.organiser.password ? `  Password: ${s.organiser.password}   (shown only this once)` : '  Password: shown only when the demo first ran.',
    `  Tally passphrase of the open election: ${s.open.passphrase}`,
    '',
    'Start the server with `npm start` and open these addresses.',
    '',
  ];
  return lines.join('\n');
}

export const demoCommand: Command = {
  name: 'demo',
  usage,
  async run(args, io) {
    if (args.length > 0) {
      io.stderr(`veiltally demo: unexpected argument "${args[0]}"\n`);
      return 2;
    }
    const config = loadConfig();
    const secrets = loadSecrets(config);
    const db = openConfiguredDatabase(config);
    try {
      await migrateLatest(db.knex);
      const summary = await seedDemo(liveContext(db, secrets, keyDirectory(config.keyDir), config.ledger));
      io.stdout(demoText(summary, config.publicUrl));
      return 0;
    } finally {
      await db.close();
    }
  },
};
