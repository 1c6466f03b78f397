import crypto from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { encodeAndSeal, openBallot, openingKey } from '../../../src/custody/ballot.ts';
import { WrongPassphrase } from '../../../src/custody/errors.ts';
import { createElectionKeys, publicKeyOf, rewrapElectionKey, unwrapElectionKey, type WrappedKey } from '../../../src/custody/keys.ts';
import { checkTallyPassphrase, tallyPassphraseSchema } from '../../../src/custody/passphrase.ts';
import { DEFAULT_KDF } from '../../../src/elections/context.ts';
import { InvalidInput } from '../../../src/errors.ts';

const cheap = { memoryKiB: 1024, iterations: 1, parallelism: 1 };
const passphrase = 'oar blades at dawn';

describe('election key wrapping (Argon2id + XChaCha20-Poly1305)', () => {
  it('keeps RFC 9106 §4 second recommended option as the default cost', () => {
    expect(DEFAULT_KDF).toEqual({ memoryKiB: 65536, iterations: 3, parallelism: 4 });
  });

  it('unwraps to the secret key that opens ballots sealed to the public key', async () => {
    const electionId = crypto.randomUUID();
    const { publicKey, wrapped } = await createElectionKeys({ passphrase, electionId, kdf: cheap });
    expect(JSON.parse(JSON.stringify(wrapped))).toEqual(wrapped);
    expect(wrapped.kdf).toEqual(cheap);
    expect(Buffer.from(wrapped.salt, 'base64')).toHaveLength(16);
    const sk = await unwrapElectionKey(wrapped, passphrase, electionId);
    expect(publicKeyOf(sk).equals(publicKey)).toBe(true);
    const sealed = encodeAndSeal(publicKey, electionId, 3, [2]);
    expect(openBallot(openingKey(publicKey, sk, electionId, 3), sealed)).toEqual([2]);
  });

  it('raises WrongPassphrase for a wrong passphrase, another election or an altered record', async () => {
    const electionId = crypto.randomUUID();
    const { wrapped } = await createElectionKeys({ passphrase, electionId, kdf: cheap });
    await expect(unwrapElectionKey(wrapped, passphrase + '!', electionId)).rejects.toBeInstanceOf(WrongPassphrase);
    await expect(unwrapElectionKey(wrapped, passphrase, crypto.randomUUID())).rejects.toBeInstanceOf(WrongPassphrase);
    const c = Buffer.from(wrapped.ciphertext, 'base64');
    c[0]! ^= 1;
    const altered: WrappedKey = { ...wrapped, ciphertext: c.toString('base64') };
    await expect(unwrapElectionKey(altered, passphrase, electionId)).rejects.toBeInstanceOf(WrongPassphrase);
    const cheaper: WrappedKey = { ...wrapped, kdf: { ...cheap, iterations: 2 } };
    await expect(unwrapElectionKey(cheaper, passphrase, electionId)).rejects.toBeInstanceOf(WrongPassphrase);
  });

  it('accepts the same passphrase in another Unicode normal form (NIST SP 800-63B §5.1.1.2, NFKC)', async () => {
    const electionId = crypto.randomUUID();
    const composed = 'Régates du lac 2026';
    const decomposed = composed.normalize('NFD');
    expect(decomposed).not.toBe(composed);
    const { wrapped } = await createElectionKeys({ passphrase: composed, electionId, kdf: cheap });
    await expect(unwrapElectionKey(wrapped, decomposed, electionId)).resolves.toHaveLength(32);
  });

  it('re-wraps under raised parameters and a new passphrase, keeping the same key', async () => {
    const electionId = crypto.randomUUID();
    const { publicKey, wrapped } = await createElectionKeys({ passphrase, electionId, kdf: cheap });
    const raised = { memoryKiB: 2048, iterations: 2, parallelism: 2 };
    const next = await rewrapElectionKey({ wrapped, passphrase, newPassphrase: 'tide tables and toast', electionId, kdf: raised });
    expect(next.kdf).toEqual(raised);
    const sk = await unwrapElectionKey(next, 'tide tables and toast', electionId);
    expect(publicKeyOf(sk).equals(publicKey)).toBe(true);
    await expect(unwrapElectionKey(next, passphrase, electionId)).rejects.toBeInstanceOf(WrongPassphrase);
  });

  it('enforces at least 12 characters, counted as code points, without echoing the passphrase', async () => {
    expect(tallyPassphraseSchema.safeParse('elevenchars').success).toBe(false);
    expect(tallyPassphraseSchema.safeParse('twelve chars').success).toBe(true);
    expect(tallyPassphraseSchema.safeParse('🚣🚣🚣🚣🚣🚣').success).toBe(false); // 6 code points, 12 UTF-16 units
    expect(() => checkTallyPassphrase('short-secret')).not.toThrow();
    try {
      checkTallyPassphrase('tiny-secret');
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(InvalidInput);
      expect((e as Error).message).toContain('12');
      expect((e as Error).message).not.toContain('tiny-secret');
    }
    await expect(createElectionKeys({ passphrase: 'too short', electionId: crypto.randomUUID(), kdf: cheap })).rejects.toBeInstanceOf(InvalidInput);
  });
});
