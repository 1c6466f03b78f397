import { keyFingerprint } from '../../custody/index.ts';
import type { SignedStatementFacts } from '../../elections/statementLinks.ts';

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

export function signedStatementView(electionId: string, facts: SignedStatementFacts): SignedStatementView {
  const { key, group } = facts;
  const s = facts.envelope.statement;
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
