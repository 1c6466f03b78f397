import { z } from 'zod';

/** The home page's one box: a ballot code, or a ballot link pasted from a message. */
export const findBallotForm = z.object({ code: z.string().max(500).catch('') });

const UUID = '[0-9a-fA-F]{8}-[0-9a-fA-F]{4}-[0-9a-fA-F]{4}-[0-9a-fA-F]{4}-[0-9a-fA-F]{12}';

/**
 * A ballot link as pasted (with or without the site's address): the path on this site it
 * names, or null. Only our own two shapes are recognised and the path is rebuilt from the id,
 * so nothing typed here can send the browser to another site.
 */
export function ballotPathOf(input: string): string | null {
  const long = new RegExp(`/vote/(${UUID})(?:[/?#]|$)`).exec(input);
  if (long) return `/vote/${long[1]!.toLowerCase()}`;
  const short = /\/v\/([0-9A-Za-z]{8})(?:[/?#]|$)/.exec(input);
  if (short) return `/v/${short[1]!.toLowerCase()}`;
  return null;
}
