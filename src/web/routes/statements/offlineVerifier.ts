import crypto from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { PUBLIC_DIR } from '../../paths.ts';

export interface OfflineFile {
  name: string;
  url: string;
  type: string;
  bytes: Buffer;
  /** SHA-256 of the exact bytes served, in hex, for /verify and for anyone publishing it elsewhere. */
  sha256: string;
}

const HTML_NAME = 'veiltally-verify.html';
const NODE_NAME = 'veiltally-verify.mjs';

/**
 * The Node version of the same check: the page's check script, word for word, between a few lines
 * that read the two files and print each check. Plain Node 20 or later (its Web Cryptography has
 * Ed25519), no install, no network.
 */
function nodeCheckerOf(core: string): string {
  const head = [
    '#!/usr/bin/env node',
    '// Checks a Veiltally signed statement offline, with plain Node (version 20 or later) and nothing to install:',
    '//   node veiltally-verify.mjs STATEMENT.json --key KEY.json [--election ELECTION_ID]',
    '// Exits 0 only when every check holds, 1 when one fails, 2 when a file cannot be read.',
    '// The check below is the same script as in veiltally-verify.html.',
    "import { readFileSync } from 'node:fs';",
  ];
  const main = `
const usage = 'Usage: node veiltally-verify.mjs STATEMENT.json --key KEY.json [--election ELECTION_ID]';
const argv = process.argv.slice(2);
let file = null;
let keyPath = null;
let election = null;
for (let i = 0; i < argv.length; i++) {
  if (argv[i] === '--key') keyPath = argv[++i] ?? '';
  else if (argv[i] === '--election') election = argv[++i] ?? '';
  else if (argv[i] === '--help' || argv[i] === '-h') {
    console.log(usage);
    process.exit(0);
  } else if (file === null) file = argv[i];
  else {
    console.error(usage);
    process.exit(2);
  }
}
if (file === null) {
  console.error(usage);
  process.exit(2);
}
const read = (p, what) => {
  try {
    return readFileSync(p, 'utf8');
  } catch (e) {
    console.error('Cannot read the ' + what + ' file "' + p + '".');
    process.exit(2);
  }
};
// Text from the statement reaches a terminal: control characters (escape sequences) become "?".
const shown = (t) => t.replace(/[\\u0000-\\u001f\\u007f-\\u009f]/g, '?');
const result = await veiltallyCheck(read(file, 'statement'), keyPath === null ? null : read(keyPath, 'key'), election);
for (const l of result.lines) console.log((l.ok ? 'ok    ' : 'FAIL  ') + shown(l.text));
if (result.passed && result.summary) {
  const s = result.summary;
  console.log('\\nWhat it says: "' + shown(s.title) + '", drawn ' + shown(s.drawnAt) + ' with ε = ' + shown(s.epsilon) + '; ' +
    (s.winners.length ? 'drawn: ' + s.winners.map(shown).join(', ') + '.' : 'no ballots were cast, so no winner was drawn.'));
}
console.log(result.passed ? '\\nAll checks passed.' : '\\nThe statement did NOT pass: see the lines marked FAIL.');
process.exit(result.passed ? 0 : 1);
`;
  return `${head.join('\n')}\n${core.trim()}\n${main}`;
}

function file(name: string, type: string, bytes: Buffer): OfflineFile {
  return {
    name,
    url: `/verify/${name}`,
    type,
    bytes,
    sha256: crypto.createHash('sha256').update(bytes).digest('hex'),
  };
}

let loaded: { html: OfflineFile; node: OfflineFile } | null = null;

/** The checkers members download: the page (src/web/public/veiltally-verify.html) and its Node twin, made once. */
export function offlineVerifiers(): { html: OfflineFile; node: OfflineFile } {
  if (!loaded) {
    const html = fs.readFileSync(path.join(PUBLIC_DIR, HTML_NAME));
    const core = /<script id="veiltally-verify-core">([\s\S]*?)<\/script>/.exec(html.toString('utf8'))?.[1];
    if (!core) throw new Error(`${HTML_NAME} has lost its check script`);
    loaded = {
      html: file(HTML_NAME, 'text/html; charset=utf-8', html),
      node: file(NODE_NAME, 'text/javascript; charset=utf-8', Buffer.from(nodeCheckerOf(core), 'utf8')),
    };
  }
  return loaded;
}

/**
 * The signature checked with OpenSSL (3.0 or later) instead of the checker: OpenSSL reads neither JSON
 * nor base64url, so sed, tr and printf (on every Unix-like system) cut out the three pieces, and
 * OpenSSL checks Ed25519 (RFC 8032) over the statement's bytes. The statement file as downloaded is
 * the envelope in RFC 8785 canonical form, {"signature":{…},"statement":…}, so the part after
 * "statement": is exactly the canonical form of the statement, the bytes that were signed. The DER
 * prefix is the SubjectPublicKeyInfo of an Ed25519 key (RFC 8410 §4), 12 bytes that base64 to
 * "MCowBQYDK2VwAyEA". Shown on /verify and run word for word by test/integration/web/offline-verifier.test.ts.
 */
export const OPENSSL_STEPS: readonly { say: string; run: string }[] = [
  {
    say: 'The signed bytes: the statement part of the file, as downloaded.',
    run: `sed -e 's/^{"signature":{[^}]*},"statement"://' -e 's/}$//' statement.json | tr -d '\\n' > signed.json`,
  },
  {
    say: 'The signature, from base64url to its 64 raw bytes.',
    run: `sed -e 's/^{"signature":{[^}]*"value":"\\([A-Za-z0-9_-]*\\)".*$/\\1==/' statement.json | tr '_-' '/+' | openssl base64 -d -A > signature.bin`,
  },
  {
    say: 'The public key, from the key file into a PEM file OpenSSL reads.',
    run: `sed -n 's/^.*"publicKey": *"\\([A-Za-z0-9_-]*\\)".*$/\\1=/p' key.json | tr '_-' '/+' > key.b64
printf -- '-----BEGIN PUBLIC KEY-----\\nMCowBQYDK2VwAyEA%s\\n-----END PUBLIC KEY-----\\n' "$(cat key.b64)" > key.pem`,
  },
  {
    say: 'The key’s fingerprint: compare it with one published elsewhere (the key id is its first 16 hex digits).',
    run: `openssl base64 -d -A -in key.b64 | openssl dgst -sha256`,
  },
  {
    say: 'Which election and which winners the signed bytes name (they are plain JSON: read the whole of signed.json if you like).',
    run: `grep -o -e '"electionId":"[^"]*"' -e '"winners":\\[[^]]*]' signed.json`,
  },
  {
    say: 'The check: OpenSSL prints “Signature Verified Successfully” and exits with 0 only when the signature holds.',
    run: `openssl pkeyutl -verify -pubin -inkey key.pem -rawin -in signed.json -sigfile signature.bin`,
  },
];
