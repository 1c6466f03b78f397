import crypto from 'node:crypto';
import { describe, expect, it } from 'vitest';
import {
  ballotLength,
  encodeAndSeal,
  encodeBallot,
  openAndCount,
  openBallot,
  openingKey,
  sealBallot,
  sealedLength,
} from '../../../src/custody/ballot.ts';
import { BallotUnreadable } from '../../../src/custody/errors.ts';
import { sodium } from '../../../src/custody/sodium.ts';

function keyPair() {
  const pk = Buffer.alloc(32);
  const sk = Buffer.alloc(32);
  sodium.crypto_box_keypair(pk, sk);
  return { pk, sk };
}
const electionId = crypto.randomUUID();
const otherElection = crypto.randomUUID();

// The encoding is our own (src/custody/ballot.ts); the sealing is libsodium crypto_box_seal.
describe('sealed ballots', () => {
  const { pk, sk } = keyPair();
  const d = 11;
  const k = openingKey(pk, sk, electionId, d);

  it('round-trips the approved positions, and an empty ballot (abstention)', () => {
    expect(openBallot(k, encodeAndSeal(pk, electionId, d, [0, 3, 10]))).toEqual([0, 3, 10]);
    expect(openBallot(k, encodeAndSeal(pk, electionId, d, []))).toEqual([]);
  });

  it('lays bits out least significant first after version and election id', () => {
    const plain = encodeBallot(electionId, d, [0, 9]);
    expect(plain.length).toBe(1 + 16 + 2);
    expect(plain[0]).toBe(1);
    expect(plain.subarray(1, 17).toString('hex')).toBe(electionId.replace(/-/g, ''));
    expect([plain[17], plain[18]]).toEqual([0b00000001, 0b00000010]);
  });

  it('gives the same ciphertext length with nothing ticked and everything ticked', () => {
    const none = encodeAndSeal(pk, electionId, d, []);
    const all = encodeAndSeal(
      pk,
      electionId,
      d,
      Array.from({ length: d }, (_, i) => i),
    );
    expect(none.length).toBe(all.length);
    expect(none.length).toBe(sealedLength(d));
    expect(sealedLength(d)).toBe(ballotLength(d) + 48); // crypto_box_SEALBYTES = 32 + 16
  });

  it('rejects a ciphertext with any single flipped byte', () => {
    const sealed = encodeAndSeal(pk, electionId, d, [1, 2]);
    for (let i = 0; i < sealed.length; i++) {
      const bent = Buffer.from(sealed);
      bent[i]! ^= 0x01;
      expect(() => openBallot(k, bent)).toThrow(BallotUnreadable);
    }
  });

  it('rejects a ballot sealed for another election under the same key', () => {
    const sealed = encodeAndSeal(pk, otherElection, d, [1]);
    expect(() => openBallot(k, sealed)).toThrow(BallotUnreadable);
  });

  it('rejects another key pair, a wrong version, a wrong length and bits at or beyond d', () => {
    const other = keyPair();
    expect(() => openBallot(k, encodeAndSeal(other.pk, electionId, d, [1]))).toThrow(BallotUnreadable);

    const v2 = encodeBallot(electionId, d, [1]);
    v2[0] = 2;
    expect(() => openBallot(k, sealBallot(pk, v2))).toThrow(BallotUnreadable);

    const longer = Buffer.concat([encodeBallot(electionId, d, [1]), Buffer.alloc(1)]);
    expect(() => openBallot(k, sealBallot(pk, longer))).toThrow(BallotUnreadable);
    expect(() => openBallot(k, sealBallot(pk, encodeBallot(electionId, d, [1]).subarray(0, 18)))).toThrow(BallotUnreadable);

    for (const bit of [11, 15]) {
      const high = encodeBallot(electionId, d, [1]);
      high[17 + (bit >> 3)]! |= 1 << (bit & 7);
      expect(() => openBallot(k, sealBallot(pk, high))).toThrow(BallotUnreadable);
    }
  });

  it('leaves the counts untouched when a ballot fails', () => {
    const counts = new Uint32Array(d);
    openAndCount(k, encodeAndSeal(pk, electionId, d, [4]), counts);
    const bad = encodeAndSeal(pk, otherElection, d, [0, 1, 2]);
    expect(() => openAndCount(k, bad, counts)).toThrow(BallotUnreadable);
    expect(Array.from(counts)).toEqual([0, 0, 0, 0, 1, 0, 0, 0, 0, 0, 0]);
  });

  it('refuses to encode positions outside 0..d-1', () => {
    expect(() => encodeBallot(electionId, d, [11])).toThrow(RangeError);
    expect(() => encodeBallot(electionId, d, [-1])).toThrow(RangeError);
    expect(() => encodeBallot(electionId, d, [1.5])).toThrow(RangeError);
  });
});
