import { randomUuid } from '../custody/index.ts';
import { recordEvent } from '../elections/audit.ts';
import type { UseCaseContext } from '../elections/context.ts';
import { EmailTaken } from './errors.ts';
import type { Db } from '../db/knex.ts';
import { countRealOrganisers, insertOrganiser } from './organiserRepo.ts';
import { hashPassword, OWASP_PASSWORD_KDF } from './passwords.ts';

/**
 * The demo login works only while the site has no real organiser: its password was printed to a
 * terminal or shown on a page, so once someone sets the site up for real it signs in no more.
 */
export async function demoLoginRetired(db: Db, organiser: { demo: boolean }): Promise<boolean> {
  return organiser.demo && (await countRealOrganisers(db)) > 0;
}

/** The demo's sample login. `.invalid` is reserved by RFC 2606 §2, so it can never be a real mailbox. */
export const DEMO_ORGANISER_EMAIL = 'demo-organiser@sample.invalid';

const ALPHABET = 'abcdefghjkmnpqrstuvwxyz23456789'; // 31 letters and digits without look-alikes

/** Four groups of five characters, about 99 bits; rejection sampling keeps every character equally likely. */
function demoPassword(random: UseCaseContext['random']): string {
  const out: string[] = [];
  while (out.length < 20) {
    for (const b of random(32)) {
      if (b < 248 && out.length < 20) out.push(ALPHABET[b % 31]!);
    }
  }
  return [0, 5, 10, 15].map((i) => out.slice(i, i + 5).join('')).join('-');
}

/**
 * Creates the organiser that owns the sample elections, flagged `demo` so every page marks it,
 * and returns its fresh password once: it is stored only as an Argon2id hash.
 */
export async function createDemoOrganiser(ctx: UseCaseContext): Promise<{ organiserId: string; email: string; password: string }> {
  const password = demoPassword(ctx.random);
  const passwordHash = await hashPassword(password, ctx.passwordKdf ?? OWASP_PASSWORD_KDF, ctx.random);
  const id = randomUuid(ctx.random);
  const now = ctx.now();
  await ctx.knex.transaction(async (trx) => {
    if (!(await insertOrganiser(trx, { id, email: DEMO_ORGANISER_EMAIL, passwordHash, createdBy: null, at: now, demo: true }))) {
      throw new EmailTaken();
    }
    await recordEvent(trx, { electionId: null, organiserId: id, action: 'demo-organiser-created' }, now);
  });
  return { organiserId: id, email: DEMO_ORGANISER_EMAIL, password };
}
