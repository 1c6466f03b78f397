import crypto from 'node:crypto';
import { z } from 'zod';
import { listOrganisers } from '../accounts/organiserRepo.ts';
import { resetOrganiserPassword, setOrganiserAdmin } from '../accounts/manageOrganisers.ts';
import { loadConfig } from '../config.ts';
import { ALPHABET } from '../custody/crockford.ts';
import { openConfiguredDatabase } from '../db/configured.ts';
import { migrateLatest } from '../db/migrate.ts';
import { liveContext, type UseCaseContext } from '../elections/context.ts';
import { keyDirectory } from '../keyfiles/keyDirectory.ts';
import { InvalidInput } from '../errors.ts';
import { loadSecrets } from '../secrets.ts';
import { checkFlags, parseFlags } from './args.ts';
import type { CliIo, Command } from './io.ts';

const USAGE = `Usage: veiltally organiser list
       veiltally organiser reset-password --email EMAIL
       veiltally organiser promote --email EMAIL
       veiltally organiser demote --email EMAIL

For the operator of the site.
  list             the organisers who can sign in, with the date each was added
  reset-password   sets a new random password for the organiser with this email, prints it
                   once, and signs that organiser out everywhere; pass it on privately and
                   ask them to change it under "Your account" after signing in
  promote          makes the organiser an administrator: they may add and remove organiser
                   accounts (never read another's elections or set another's password)
  demote           makes an administrator an ordinary organiser again

Uses the same database as the server (DATABASE_URL, or the embedded database in
VEILTALLY_DATA_DIR; stop the server first when it runs on the embedded database).
`;

/** 20 Crockford symbols, 100 bits, in groups of four: strong and easy to read out. */
export function randomPassword(random: (n: number) => Uint8Array = (n) => crypto.randomBytes(n)): string {
  const bytes = random(20);
  // Each byte's low 5 bits pick a symbol: uniform, since 256 is a multiple of 32.
  const symbols = Array.from(bytes, (b) => ALPHABET[b & 31]!).join('');
  return symbols.match(/.{4}/g)!.join('-');
}

/** Opens the configured database and a context for the account use-cases; tests pass their own. */
export type ContextOpener = () => Promise<{ ctx: UseCaseContext; close: () => Promise<void> }>;

const openConfigured: ContextOpener = async () => {
  const config = loadConfig();
  const db = openConfiguredDatabase(config);
  await migrateLatest(db.knex);
  const ctx = liveContext(db, loadSecrets(config), keyDirectory(config.keyDir), config.ledger);
  return { ctx, close: () => db.close() };
};

const resetFlags = z.object({ email: z.string({ message: '--email is missing: give the email of the organiser to reset' }).min(1) });

export function makeOrganiserCommand(open: ContextOpener = openConfigured): Command {
  return {
    name: 'organiser',
    usage: USAGE,
    async run(args: string[], io: CliIo) {
      const [action, ...rest] = args;
      if (action !== 'list' && action !== 'reset-password' && action !== 'promote' && action !== 'demote') {
        throw new InvalidInput(
          action === undefined
            ? 'say what to do: `list`, `reset-password --email EMAIL`, `promote --email EMAIL` or `demote --email EMAIL`'
            : `unknown action "${action.slice(0, 40)}": use \`list\`, \`reset-password\`, \`promote\` or \`demote\``,
        );
      }
      const flags =
        action === 'list' ? (parseFlags('organiser', rest, {}), null) : checkFlags(resetFlags, parseFlags('organiser', rest, { email: 'value' }));
      const { ctx, close } = await open();
      try {
        if (action === 'list') {
          const organisers = await listOrganisers(ctx.knex);
          if (organisers.length === 0) io.stdout('No organisers yet: open the site and follow the first-run page.\n');
          for (const o of organisers)
            io.stdout(
              `${o.email}\tadded ${o.createdAt.toISOString().slice(0, 10)}${o.admin ? '\tadministrator' : ''}${o.demo ? '\tdemo sample login' : ''}\n`,
            );
          return 0;
        }
        const email = flags!.email.trim().toLowerCase();
        const target = (await listOrganisers(ctx.knex)).find((o) => o.email === email);
        if (!target) throw new InvalidInput(`no organiser with the email ${email.slice(0, 254)}; \`veiltally organiser list\` shows them`);
        if (action === 'promote' || action === 'demote') {
          if (target.demo) throw new InvalidInput('the demo sample login cannot be an administrator');
          await setOrganiserAdmin(ctx, { targetId: target.id, admin: action === 'promote' });
          io.stdout(
            action === 'promote'
              ? `${target.email} is now an administrator: they may add and remove organisers.\n`
              : `${target.email} is now an ordinary organiser.\n`,
          );
          return 0;
        }
        const password = randomPassword(ctx.random);
        await resetOrganiserPassword(ctx, { targetId: target.id, password, passwordAgain: password });
        io.stdout(
          `New password for ${target.email}: ${password}\n` +
            'It is shown only now. Pass it on privately; they should change it under "Your account" after signing in.\n',
        );
        return 0;
      } finally {
        await close();
      }
    },
  };
}

export const organiserCommand: Command = makeOrganiserCommand();
