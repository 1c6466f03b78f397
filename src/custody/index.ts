/**
 * Ballot custody: pure cryptography over libsodium (sodium-native) and Argon2id (argon2).
 * No database, no web, no clock; randomness is passed in where it matters.
 */
export { createElectionKeys, unwrapElectionKey, rewrapElectionKey, parseWrappedKey, publicKeyOf, wrappedKeySchema } from './keys.ts';
export type { WrappedKey } from './keys.ts';
export { deriveKey, kdfParamsSchema, ARGON2_VERSION } from './kdf.ts';
export type { KdfParams, KdfExtras } from './kdf.ts';
export { tallyPassphraseSchema, checkTallyPassphrase, TALLY_PASSPHRASE_MIN, TALLY_PASSPHRASE_NOTICE } from './passphrase.ts';
export { normaliseCode, formatCode, generateCode, codeBytes, generateReceipt, normaliseReceipt, CODE_SYMBOLS, RECEIPT_SYMBOLS } from './codes.ts';
export type { BallotCode } from './codes.ts';
export { codeFromSeed, codesFromSeed, encodeBatchSeed, decodeBatchSeed, BATCH_SEED_BYTES } from './codeBatch.ts';
export {
  encodeBallot,
  sealBallot,
  openSealedBox,
  encodeAndSeal,
  openingKey,
  openAndCount,
  openBallot,
  ballotLength,
  sealedLength,
  BALLOT_VERSION,
  MAX_SEALED_OPTIONS,
} from './ballot.ts';
export type { OpeningKey } from './ballot.ts';
export { codeHash, receiptHash, memberHash, hmacSha256 } from './keyedHash.ts';
export { signStatement, verifyStatement, publicKeyFromSeed, signingKeyId, keyFingerprint } from './signing.ts';
export { isUuid, uuidBytes, randomUuid, UUID_PATTERN } from './ids.ts';
export { sodiumRandom, wipe } from './sodium.ts';
export { WrongPassphrase, BallotUnreadable, CodeTypo, CodeMalformed, ReceiptMalformed, WrappedKeyInvalid } from './errors.ts';
export { sealForElection, openForElection } from './sealed.ts';
export { generateCastToken, parseCastToken, castTokenHash, sealReceiptForToken, openReceiptForToken, CAST_TOKEN_BYTES } from './castToken.ts';
export {
  SHRED_KEY_BYTES,
  SHRED_LAYER_BYTES,
  newShredKey,
  sealUnderShredKey,
  openUnderShredKey,
  sealWrappedKey,
  openStoredKey,
  isShredLayered,
  innerBallot,
  outerBallot,
  storedKeySchema,
} from './shredLayer.ts';
export type { ShredLayerKind, StoredKey } from './shredLayer.ts';
