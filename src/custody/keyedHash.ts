import crypto from 'node:crypto';
import { uuidBytes } from './ids.ts';

/**
 * HMAC-SHA-256 (RFC 2104, FIPS 198-1) under the instance pepper.
 * sodium-native 5 exposes only HMAC-SHA-512/256 (crypto_auth) and no crypto_auth_hmacsha256,
 * so this uses Node's built-in OpenSSL HMAC rather than composing one by hand from SHA-256.
 * Inputs are domain-separated ("veiltally/code/1" vs "veiltally/receipt/1") and bound to
 * the election, so a code hash can never be confused with a receipt hash (common practice).
 */
export function hmacSha256(key: Uint8Array, message: Uint8Array): Buffer {
  return crypto.createHmac('sha256', key).update(message).digest();
}

function keyed(pepper: Uint8Array, domain: string, electionId: string, secret: Uint8Array): Buffer {
  if (pepper.byteLength < 32) throw new RangeError('the pepper must have at least 32 bytes');
  const tag = Buffer.from(domain + '\0', 'utf8');
  return hmacSha256(pepper, Buffer.concat([tag, uuidBytes(electionId), secret]));
}

/** Stored form of a ballot code (canonical form from normaliseCode). */
export function codeHash(pepper: Uint8Array, electionId: string, canonicalCode: string): Buffer {
  return keyed(pepper, 'veiltally/code/1', electionId, Buffer.from(canonicalCode, 'ascii'));
}

/** Stored form of a receipt (canonical form from normaliseReceipt). */
export function receiptHash(pepper: Uint8Array, electionId: string, canonicalReceipt: string): Buffer {
  return keyed(pepper, 'veiltally/receipt/1', electionId, Buffer.from(canonicalReceipt, 'ascii'));
}

/**
 * A roster member's key in the privacy ledger: HMAC-SHA-256 under the instance pepper of the
 * canonical (trimmed, NFC, lower-cased) address, domain "veiltally/member/1". Not bound to an
 * election or a roster, so every draw over the same person on this instance meets under the same
 * key, whatever roster they were on. Without the pepper the hash cannot be tested against a
 * guessed address; whoever holds the pepper (the operator) can.
 */
export function memberHash(pepper: Uint8Array, canonicalAddress: string): Buffer {
  if (pepper.byteLength < 32) throw new RangeError('the pepper must have at least 32 bytes');
  return hmacSha256(pepper, Buffer.concat([Buffer.from('veiltally/member/1\0', 'utf8'), Buffer.from(canonicalAddress, 'utf8')]));
}

/**
 * The key of an attempt-limit row (an address, an address and an account, an election id):
 * HMAC-SHA-256 under the instance pepper, domain "veiltally/limit-key/1", base64url, 32 characters
 * (192 bits). An unkeyed hash of an IPv4 address is undone by hashing all 2³² of them; without the
 * pepper, a copy of the database cannot test a guessed address or account against these rows.
 */
export function limitKeyHash(pepper: Uint8Array, value: string): string {
  if (pepper.byteLength < 32) throw new RangeError('the pepper must have at least 32 bytes');
  return hmacSha256(pepper, Buffer.concat([Buffer.from('veiltally/limit-key/1\0', 'utf8'), Buffer.from(value, 'utf8')]))
    .toString('base64url')
    .slice(0, 32);
}
