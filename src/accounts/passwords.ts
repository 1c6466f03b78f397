import argon2 from 'argon2';
import { z } from 'zod';
import type { KdfParams, RandomBytes } from '../elections/context.ts';

/**
 * OWASP Password Storage Cheat Sheet, Argon2id: "a minimum configuration of 19 MiB of memory,
 * an iteration count of 2, and 1 degree of parallelism". Production uses exactly this floor.
 */
export const OWASP_PASSWORD_KDF: KdfParams = Object.freeze({ memoryKiB: 19 * 1024, iterations: 2, parallelism: 1 });

export const PASSWORD_MIN = 12;
/** NIST SP 800-63B §5.1.1.2 asks to permit at least 64 characters; the cap only bounds hashing work. */
export const PASSWORD_MAX = 256;

const length = (s: string): number => Array.from(s).length;

/** Length is the rule (NIST SP 800-63B §5.1.1.2): no composition rules. */
export const passwordSchema = z
  .string()
  .refine((s) => length(s) >= PASSWORD_MIN, { message: `Use at least ${PASSWORD_MIN} characters. A few unrelated words work well.` })
  .refine((s) => length(s) <= PASSWORD_MAX, { message: `Use at most ${PASSWORD_MAX} characters.` });

/** NFKC, as NIST SP 800-63B §5.1.1.2 suggests, so the same password typed on another keyboard matches. */
const normalised = (password: string): Buffer => Buffer.from(password.normalize('NFKC'), 'utf8');

const SALT_BYTES = 16; // RFC 9106 §3.1: 128-bit salt

function options(cost: KdfParams): argon2.HashOptions {
  return { type: argon2.argon2id, memoryCost: cost.memoryKiB, timeCost: cost.iterations, parallelism: cost.parallelism };
}

/** PHC-format Argon2id hash ($argon2id$v=19$m=…,t=…,p=…$salt$hash). */
export async function hashPassword(password: string, cost: KdfParams, random: RandomBytes): Promise<string> {
  return argon2.hash(normalised(password), { ...options(cost), salt: Buffer.from(random(SALT_BYTES)) });
}

export async function verifyPassword(hash: string, password: string): Promise<boolean> {
  try {
    return await argon2.verify(hash, normalised(password));
  } catch {
    return false; // a damaged stored hash is a failed sign-in, never a crash
  }
}

/** True when a stored hash was made with other parameters, so it is upgraded at the next sign-in. */
export function needsRehash(hash: string, cost: KdfParams): boolean {
  try {
    return argon2.needsRehash(hash, { memoryCost: cost.memoryKiB, timeCost: cost.iterations, parallelism: cost.parallelism });
  } catch {
    return true;
  }
}

const dummies = new Map<string, Promise<string>>();

/**
 * A hash of a random password at the current cost. Sign-in verifies against it when the
 * email is unknown, so an unknown email costs the same time as a wrong password.
 */
export function dummyHash(cost: KdfParams, random: RandomBytes): Promise<string> {
  const key = `${cost.memoryKiB}/${cost.iterations}/${cost.parallelism}`;
  let h = dummies.get(key);
  if (!h) {
    h = hashPassword(Buffer.from(random(24)).toString('base64'), cost, random);
    dummies.set(key, h);
  }
  return h;
}
