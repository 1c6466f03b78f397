import crypto from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { PUBLIC_DIR } from '../../paths.ts';

export const OFFLINE_VERIFIER_NAME = 'veiltally-verify.html';
export const OFFLINE_VERIFIER_URL = `/verify/${OFFLINE_VERIFIER_NAME}`;

export interface OfflineVerifier {
  bytes: Buffer;
  /** SHA-256 of the exact bytes served, in hex, for /verify and for anyone publishing it elsewhere. */
  sha256: string;
}

let loaded: OfflineVerifier | null = null;

/** The single-file checker members download (src/web/public/veiltally-verify.html), read once. */
export function offlineVerifier(): OfflineVerifier {
  if (!loaded) {
    const bytes = fs.readFileSync(path.join(PUBLIC_DIR, OFFLINE_VERIFIER_NAME));
    loaded = { bytes, sha256: crypto.createHash('sha256').update(bytes).digest('hex') };
  }
  return loaded;
}
