import { innerBallot, unwrapElectionKey, wipe } from '../../src/custody/index.ts';
import type { UseCaseContext } from '../../src/elections/context.ts';
import { shredKeyOf, wrappedKeyOf } from '../../src/elections/shredKeys.ts';

const json = (v: unknown): unknown => (typeof v === 'string' ? JSON.parse(v) : v);

/** The election secret key from a stored wrapped key (a row's wrapped_key), through the shred layer as the tally does. */
export async function secretKeyFromRow(ctx: UseCaseContext, electionId: string, storedWrappedKey: unknown, passphrase: string): Promise<Buffer> {
  return unwrapElectionKey(await wrappedKeyOf(ctx, { id: electionId, wrappedKey: json(storedWrappedKey) }), passphrase, electionId);
}

/** Stored ballots with the shred layer taken off, as the tally reads them. */
export async function innerBallots(ctx: UseCaseContext, electionId: string, storedWrappedKey: unknown, stored: Buffer[]): Promise<Buffer[]> {
  const key = await shredKeyOf(ctx, { id: electionId, wrappedKey: json(storedWrappedKey) });
  try {
    return stored.map((s) => innerBallot(key, electionId, s));
  } finally {
    if (key) wipe(key);
  }
}
