import fs from 'node:fs';
import { z } from 'zod';
import { isUuid, signingKeyId, verifyStatement } from '../../custody/index.ts';
import { InvalidInput } from '../../errors.ts';
import { canonicalJson, isMemberLedger, recheckStatement, STATEMENT_FORMAT, type StatementEnvelope } from '../../mechanism/index.ts';
import { schemaProblems } from '../../statement/format.ts';
import { checkFlags, parseFlags } from '../args.ts';
import type { Command } from '../io.ts';
import { wrap } from '../table.ts';

const usage = `Usage: veiltally verify STATEMENT.json --key KEY_FILE [--election ELECTION_ID]

Checks a signed statement on this machine, with no network access:
  - any layout of the file will do (a pretty-printed one too): what is signed and checked is
    its content in RFC 8785 canonical form, so spacing never matters and a changed value does;
  - it matches the statement format (the JSON Schema shipped with Veiltally);
  - the Ed25519 signature (RFC 8032) is valid for the key in KEY_FILE, and that key is the one
    the statement names (its id is the first 16 hex digits of SHA-256 of the public key);
  - with --election, the statement is about that election (a statement copied onto another
    election fails here);
  - every privacy figure and bound, recomputed from the statement's own ε, options and seats.
Prints each check in plain words. Exits 0 only when all of them hold, 1 when one fails,
2 when a file cannot be read. Without --key the signature cannot be checked: the other checks
still run and are printed, but the statement does not pass.

KEY_FILE is the key file from the instance's /keys page (JSON with "publicKey"), or the
32-byte public key as base64url or hex text.`;

const spec = { key: 'value', election: 'value' } as const;
const flagSchema = z.object({
  key: z.string().optional(),
  election: z.string().refine(isUuid, { error: 'must be an election id (a UUID)' }).optional(),
});

function readText(path: string, what: string): string {
  try {
    return fs.readFileSync(path, 'utf8');
  } catch {
    throw new InvalidInput(`cannot read the ${what} file "${path.slice(0, 200)}"`);
  }
}

/** The 32 public-key bytes from a key file: the instance's JSON key document, or bare base64url / hex. */
export function readPublicKey(text: string): { publicKey: Buffer; claimedKeyId: string | null } {
  const trimmed = text.trim();
  let raw = trimmed;
  let claimedKeyId: string | null = null;
  if (trimmed.startsWith('{')) {
    let doc: unknown;
    try {
      doc = JSON.parse(trimmed);
    } catch {
      throw new InvalidInput('the key file is not valid JSON');
    }
    const parsed = z.object({ alg: z.literal('Ed25519'), publicKey: z.string(), keyId: z.string().optional() }).safeParse(doc);
    if (!parsed.success) throw new InvalidInput('the key file must hold {"alg":"Ed25519","publicKey":"…"}');
    raw = parsed.data.publicKey;
    claimedKeyId = parsed.data.keyId ?? null;
  }
  const bytes = /^[0-9a-f]{64}$/i.test(raw) ? Buffer.from(raw, 'hex') : /^[A-Za-z0-9_-]{43}$/.test(raw) ? Buffer.from(raw, 'base64url') : null;
  if (!bytes || bytes.length !== 32) throw new InvalidInput('the key file does not hold a 32-byte Ed25519 public key');
  return { publicKey: bytes, claimedKeyId };
}

interface Line {
  ok: boolean;
  text: string;
}

/** All the checks, pure apart from the inputs given: the statement text, the key text and the expected election. */
export function verifyStatementText(
  statementText: string,
  keyText: string | null,
  election: string | null,
): { lines: Line[]; passed: boolean; envelope: StatementEnvelope | null } {
  const lines: Line[] = [];
  const add = (ok: boolean, text: string) => lines.push({ ok, text });
  let doc: unknown;
  try {
    doc = JSON.parse(statementText);
  } catch {
    add(false, 'The file is not JSON, so nothing else could be checked.');
    return { lines, passed: false, envelope: null };
  }
  const problems = schemaProblems(doc);
  add(
    problems.length === 0,
    problems.length === 0
      ? `The statement matches the format ${STATEMENT_FORMAT} (JSON Schema, draft 2020-12).`
      : `The statement does not match the format ${STATEMENT_FORMAT}: ${problems.slice(0, 5).join('; ')}.`,
  );
  if (problems.length > 0) return { lines, passed: false, envelope: null };
  const envelope = doc as StatementEnvelope;
  const s = envelope.statement;
  const canonical = canonicalJson(envelope);
  // Any JSON rendering verifies: the signature is checked over the canonical form of what was parsed, so
  // spacing (a browser's pretty-printed view) never matters and every changed value does.
  add(
    true,
    statementText.replace(/\n$/, '') === canonical
      ? 'The file is in RFC 8785 canonical form, exactly as the instance published it.'
      : 'The file is laid out differently from the published bytes (pretty-printed, for example); the signature is checked over its content in RFC 8785 canonical form, so layout does not matter.',
  );
  add(
    envelope.signature.keyId === s.keyId,
    envelope.signature.keyId === s.keyId
      ? `The statement and its signature name the same key, ${s.keyId}.`
      : `The signature names key ${envelope.signature.keyId} but the statement names key ${s.keyId}.`,
  );
  if (keyText === null) {
    add(
      false,
      `The signature was NOT checked: no key was given. Download key ${s.keyId} from the instance's /keys page, compare its fingerprint, and run again with --key.`,
    );
  } else {
    const { publicKey, claimedKeyId } = readPublicKey(keyText);
    const id = signingKeyId(publicKey);
    add(
      claimedKeyId === null || claimedKeyId === id,
      claimedKeyId === null || claimedKeyId === id
        ? `The key file holds key ${id}.`
        : `The key file says it is key ${claimedKeyId}, but its public key has id ${id}.`,
    );
    add(id === s.keyId, id === s.keyId ? 'It is the key the statement names.' : `It is not the key the statement names (${s.keyId}).`);
    const valid = verifyStatement(new TextEncoder().encode(canonicalJson(s)), Buffer.from(envelope.signature.value, 'base64url'), publicKey);
    add(
      valid,
      valid
        ? 'The Ed25519 signature over the statement is valid for this key: nobody changed the statement after it was signed.'
        : 'The Ed25519 signature does NOT match: the statement was changed after signing, or it was signed with another key.',
    );
  }
  if (election !== null) {
    const same = s.electionId.toLowerCase() === election.toLowerCase();
    add(
      same,
      same
        ? `The statement is about election ${s.electionId}, the one you asked about.`
        : `The statement is about election ${s.electionId}, not ${election}.`,
    );
  }
  for (const c of recheckStatement(s)) add(c.ok, c.ok ? `Recomputed: ${c.what}.` : `Does NOT match when recomputed: ${c.what}.`);
  return { lines, passed: lines.every((l) => l.ok), envelope };
}

/** Text from the statement is shown in a terminal: control characters (escape sequences) become "?". */
// eslint-disable-next-line no-control-regex -- matching control characters is the point: they must not reach the terminal
const shown = (text: string): string => text.replace(/[\u0000-\u001f\u007f-\u009f]/g, '?');

function summary(e: StatementEnvelope): string {
  const s = e.statement;
  const winners = s.released.anyoneVoted ? s.released.winners.map((w) => `"${shown(w)}"`).join(', ') : 'none (no ballots were cast)';
  const turnout = s.released.turnout ? `${s.released.turnout.value} ballots (exact, not protected)` : 'not published';
  const whether = s.privacy.whetherVoted ? `ε = ${s.privacy.whetherVoted.epsilon}` : 'not protected (exact turnout published)';
  const live = s.released.liveTurnout;
  const quorum = s.released.quorum;
  return [
    `What the statement says: election "${shown(s.electionTitle)}" (${s.electionId}), draw number ${s.drawSequence} of this instance, drawn ${s.drawnAt}.`,
    `Released: winners ${winners}; turnout ${turnout}; whether anyone voted (not protected).`,
    ...(live
      ? [
          `Live turnout while voting ran: ${live.releases} noisy releases, one every ${live.intervalHours} hour(s), ε = ${live.epsilon} (binary-tree counter, discrete Laplace of scale ${live.nodeScale} on each node), included in whether a member voted.`,
        ]
      : []),
    ...(quorum
      ? [
          `Quorum: ${quorum.minimum} ballot(s), met: ${quorum.met ? 'yes' : 'no'}. One exact bit, not protected by ε: near the quorum one member's choice to vote can change it.`,
        ]
      : []),
    `Rule: ${s.mechanism.rule}, ε = ${s.mechanism.epsilon}, ${s.mechanism.seats} seat(s), ${s.mechanism.neighbour} neighbours. How a member voted: ε = ${s.privacy.howVoted.epsilon}; whether: ${whether}.`,
    isMemberLedger(s.ledger)
      ? `The ${s.ledger.members} members of the roster over the 12 months to this draw, the most any one of them has: ${s.ledger.draws} draw(s), ε = ${s.ledger.howVotedEpsilon} for how they voted, ε = ${s.ledger.whetherVotedEpsilon} for whether (every draw on the instance over their address; basic composition, Dwork & Roth 2014, Thm 3.16).`
      : `Group "${shown(s.ledger.groupName)}" over the 12 months to this draw: ${s.ledger.draws} draw(s), ε = ${s.ledger.howVotedEpsilon} for how members voted, ε = ${s.ledger.whetherVotedEpsilon} for whether (basic composition, Dwork & Roth 2014, Thm 3.16).`,
  ]
    .map((l) => wrap(l))
    .join('');
}

export const verifyCommand: Command = {
  name: 'verify',
  usage,
  async run(args, io) {
    const [file, ...rest] = args;
    if (file === undefined || file.startsWith('--'))
      throw new InvalidInput('give the statement file first: veiltally verify STATEMENT.json --key KEY_FILE');
    const flags = checkFlags(flagSchema, parseFlags('verify', rest, spec));
    const statementText = readText(file, 'statement');
    const keyText = flags.key === undefined ? null : readText(flags.key, 'key');
    const { lines, passed, envelope } = verifyStatementText(statementText, keyText, flags.election ?? null);
    for (const l of lines) io.stdout(`${l.ok ? 'ok  ' : 'FAIL'}  ${l.text}\n`);
    if (envelope) io.stdout('\n' + summary(envelope));
    io.stdout(passed ? '\nAll checks passed.\n' : '\nThe statement did NOT pass: see the lines marked FAIL.\n');
    return passed ? 0 : 1;
  },
};
