import { keyFingerprint } from '../../custody/index.ts';
import type { Db } from '../../db/knex.ts';
import { findGroup } from '../../elections/ledgerRepo.ts';
import { findStatement } from '../../elections/signDraw.ts';
import { findSigningKey } from '../../elections/signingKeyRepo.ts';

/** The signed statement's links and the key fingerprint, shown on every published result page. */
export interface SignedStatementView {
  statementUrl: string;
  keyId: string;
  fingerprint: string;
  keyUrl: string;
  drawSequence: number;
  ledgerUrl: string;
  groupName: string;
  howVotedTotal: string;
  draws: number;
}

export async function signedStatementView(db: Db, electionId: string): Promise<SignedStatementView | null> {
  const signed = await findStatement(db, electionId);
  if (!signed) return null;
  const s = signed.envelope.statement;
  const key = await findSigningKey(db, signed.envelope.signature.keyId);
  const group = await findGroup(db, s.ledger.groupId);
  return {
    statementUrl: `/results/${electionId}/statement.json`,
    keyId: s.keyId,
    fingerprint: key ? keyFingerprint(key.publicKey) : 'unknown key',
    keyUrl: `/keys/${s.keyId}.json`,
    drawSequence: s.drawSequence,
    ledgerUrl: `/groups/${s.ledger.groupId}/ledger`,
    groupName: group?.name ?? s.ledger.groupName,
    howVotedTotal: s.ledger.howVotedEpsilon,
    draws: s.ledger.draws,
  };
}
