import { z } from 'zod';
import { InvalidInput } from '../errors.ts';

/** At least 12 characters, counted as Unicode code points (so accented letters count once). */
export const TALLY_PASSPHRASE_MIN = 12;
/** An upper bound only to keep hashing bounded; long passphrases are welcome. */
export const TALLY_PASSPHRASE_MAX = 1024;

/** Shown wherever the organiser chooses the passphrase. */
export const TALLY_PASSPHRASE_NOTICE =
  'Keep this passphrase safe. Nobody, including the people running this site, can recover it: ' +
  'without it the sealed ballots can never be counted.';

const length = (s: string): number => Array.from(s).length;

/**
 * The rule, as a zod schema the web layer reuses for its form.
 * NIST SP 800-63B §5.1.1.2: length is the rule that matters; no composition rules.
 */
export const tallyPassphraseSchema = z
  .string()
  .refine((s) => length(s) >= TALLY_PASSPHRASE_MIN, {
    message: `The tally passphrase needs at least ${TALLY_PASSPHRASE_MIN} characters. A few unrelated words work well.`,
  })
  .refine((s) => length(s) <= TALLY_PASSPHRASE_MAX, {
    message: `The tally passphrase can have at most ${TALLY_PASSPHRASE_MAX} characters.`,
  });

/** Throws InvalidInput (never echoing the passphrase) when the rule is not met. */
export function checkTallyPassphrase(passphrase: string): void {
  const r = tallyPassphraseSchema.safeParse(passphrase);
  if (!r.success) {
    const message = r.error.issues[0]?.message ?? 'The tally passphrase is not acceptable.';
    throw new InvalidInput(message, [{ path: 'passphrase', message }]);
  }
}

/**
 * The bytes fed to Argon2id: NFKC-normalised UTF-8 (NIST SP 800-63B §5.1.1.2 recommends
 * NFKC or NFKD), so the same passphrase typed on another keyboard still unlocks the key.
 * The caller wipes the buffer after use.
 */
export function passphraseBytes(passphrase: string): Buffer {
  return Buffer.from(passphrase.normalize('NFKC'), 'utf8');
}
