import { describe, expect, it } from 'vitest';
import { deriveKey } from '../../../src/custody/kdf.ts';
import { hmacSha256 } from '../../../src/custody/keyedHash.ts';
import { openSealedBox } from '../../../src/custody/ballot.ts';
import { publicKeyFromSeed, signStatement, verifyStatement } from '../../../src/custody/signing.ts';

const hex = (s: string) => Buffer.from(s, 'hex');

describe('published test vectors through the custody call paths', () => {
  it('Argon2id tag matches RFC 9106 §5.3 through deriveKey, the key-wrapping path', async () => {
    // RFC 9106 §5.3: Argon2id, version 0x13, m = 32 KiB, t = 3, p = 4, tag 32 bytes.
    const tag = await deriveKey(
      Buffer.alloc(32, 0x01),
      Buffer.alloc(16, 0x02),
      { memoryKiB: 32, iterations: 3, parallelism: 4 },
      { secret: Buffer.alloc(8, 0x03), associatedData: Buffer.alloc(12, 0x04), hashLength: 32 },
    );
    expect(tag.toString('hex')).toBe('0d640df58d78766c08c037a34a8b53c9d01ef0452d75b65eb52520e96b01e659');
  });

  it('Ed25519 matches RFC 8032 §7.1 TEST 1 (empty message)', () => {
    const seed = hex('9d61b19deffd5a60ba844af492ec2cc44449c5697b326919703bac031cae7f60');
    const pk = publicKeyFromSeed(seed);
    expect(pk.toString('hex')).toBe('d75a980182b10ab7d54bfed3c964073a0ee172f3daa62325af021a68f707511a');
    const sig = signStatement(new Uint8Array(0), seed);
    expect(sig.toString('hex')).toBe(
      'e5564300c360ac729086e2cc806e828a84877f1eb8e5d974d873e065224901555fb8821590a33bacc61e39701cf9b46bd25bf5f0595bbe24655141438e7a100b',
    );
    expect(verifyStatement(new Uint8Array(0), sig, pk)).toBe(true);
    const bent = Buffer.from(sig);
    bent[0]! ^= 1;
    expect(verifyStatement(new Uint8Array(0), bent, pk)).toBe(false);
    expect(verifyStatement(Buffer.from('x'), sig, pk)).toBe(false);
  });

  it('Ed25519 matches RFC 8032 §7.1 TEST 2 (one byte 0x72; values recalled from memory, checked by this run)', () => {
    const seed = hex('4ccd089b28ff96da9db6c346ec114e0f5b8a319f35aba624da8cf6ed4fb8a6fb');
    expect(publicKeyFromSeed(seed).toString('hex')).toBe('3d4017c3e843895a92b70aa74d1b7ebc9c982ccf2ec4968cc0cd55f12af4660c');
    expect(signStatement(hex('72'), seed).toString('hex')).toBe(
      '92a009a9f0d4cab8720e820b5f642540a2b27b5416503f8fb3762223ebdb69da085ac1e43e15996e458f3613d0f11d8c387b2eaeb4302aeeb00d291612bb0c00',
    );
  });

  it("sealed box opens the known ciphertext from sodium-native's cross-decrypt test", () => {
    // sodium-native test suite (crypto_box_seal cross-decrypt): libsodium-made ciphertext of "hello world".
    const pk = hex('e0bb844ae3f48bb04323c8dfe7c34cf86608db2e2112f927953060c80506287f');
    const sk = hex('036a9de1ecc9d152cf39fed1b3e15bf761ae39a299031adc011cc9809041abfa');
    const sealed = hex('249912e916ad8bcf96a3f9b750da27032eccdf83b5cff0d6a59a8bbe0bcd58235de9fbca55bd5416c754e5e0e0fe2f0c4e50df0cb302f1c4378f80');
    expect(openSealedBox(sealed, pk, sk)?.toString('utf8')).toBe('hello world');
    const bent = Buffer.from(sealed);
    bent[bent.length - 1]! ^= 0x80;
    expect(openSealedBox(bent, pk, sk)).toBeNull();
  });

  it('HMAC-SHA-256 matches RFC 4231 §4.2 and §4.3 (test cases 1 and 2)', () => {
    expect(hmacSha256(Buffer.alloc(20, 0x0b), Buffer.from('Hi There')).toString('hex')).toBe(
      'b0344c61d8db38535ca8afceaf0bf12b881dc200c9833da726e9376c2e32cff7',
    );
    expect(hmacSha256(Buffer.from('Jefe'), Buffer.from('what do ya want for nothing?')).toString('hex')).toBe(
      '5bdcc146bf60754e6a042426089575c75a003f089d2739839dec58b964ec3843',
    );
  });
});
