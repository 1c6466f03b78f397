import { z } from 'zod';
import { UUID_PATTERN } from '../../../custody/index.ts';

/** The home page's one box: a ballot code, or a ballot link pasted from a message. */
export const findBallotForm = z.object({ code: z.string().max(500).catch('') });

/**
 * A ballot link as pasted (with or without the site's address): the path on this site it
 * names, or null. Only our own two shapes are recognised and the path is rebuilt from the id,
 * so nothing typed here can send the browser to another site.
 */
export function ballotPathOf(input: string): string | null {
  const long = new RegExp(`/vote/(${UUID_PATTERN})(?:[/?#]|$)`).exec(input);
  if (long) return `/vote/${long[1]!.toLowerCase()}`;
  const short = /\/v\/([0-9A-Za-z]{8})(?:[/?#]|$)/.exec(input);
  if (short) return `/v/${short[1]!.toLowerCase()}`;
  return null;
}
