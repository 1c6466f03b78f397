import argon2 from 'argon2';
import { z } from 'zod';
/** Argon2id cost for wrapping election keys (RFC 9106 §4 second option by default). */
export interface KdfParams {
  memoryKiB: number;
  iterations: number;
  parallelism: number;
}

/**
 * Bounds on stored Argon2id parameters, so a damaged or hostile stored value cannot
 * ask for absurd work. RFC 9106 §3.1: p in 1..2^24-1, m >= 8p KiB, t >= 1.
 */
export const kdfParamsSchema = z
  .object({
    memoryKiB: z
      .number()
      .int()
      .min(8)
      .max(4 * 1024 * 1024),
    iterations: z.number().int().min(1).max(64),
    parallelism: z.number().int().min(1).max(64),
  })
  .refine((k) => k.memoryKiB >= 8 * k.parallelism, { message: 'memoryKiB must be at least 8 × parallelism' });

/** Argon2 version 0x13, the only version RFC 9106 defines. */
export const ARGON2_VERSION = 0x13;

export interface KdfExtras {
  /** Argon2 secret value K (RFC 9106 §3.1); unused for key wrapping, used by the RFC vector. */
  secret?: Buffer;
  /** Argon2 associated data X (RFC 9106 §3.1). */
  associatedData?: Buffer;
  /** Tag length in bytes; 32 for a wrapping key. */
  hashLength?: number;
}

/**
 * Argon2id, raw output. This is the single call path that derives wrapping keys, so the
 * RFC 9106 §5.3 test vector exercises exactly the code that protects election keys.
 * The caller owns the returned buffer and should wipe it after use.
 */
export async function deriveKey(password: Buffer, salt: Buffer, params: KdfParams, extras: KdfExtras = {}): Promise<Buffer> {
  const p = kdfParamsSchema.parse(params);
  return argon2.hash(password, {
    type: argon2.argon2id,
    version: ARGON2_VERSION,
    raw: true,
    salt,
    memoryCost: p.memoryKiB,
    timeCost: p.iterations,
    parallelism: p.parallelism,
    hashLength: extras.hashLength ?? 32,
    ...(extras.secret ? { secret: extras.secret } : {}),
    ...(extras.associatedData ? { associatedData: extras.associatedData } : {}),
  });
}
