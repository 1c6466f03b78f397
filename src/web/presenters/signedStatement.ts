import { keyFingerprint } from '../../custody/index.ts';
import { isMemberLedger } from '../../mechanism/index.ts';
import type { SignedStatementFacts } from '../../elections/statementLinks.ts';

/** The signed statement's links and the key fingerprint, shown on every published result page. */
export interface SignedStatementView {
  statementUrl: string;
  keyId: string;
  fingerprint: string;
  keyUrl: string;
  drawSequence: number;
  /** The group's public ledger page; null for a roster, whose members' ledger has no public page. */
  ledgerUrl: string | null;
  /** Printed codes: the group's name. A roster: null, and members says how many were charged. */
  groupName: string | null;
  members: number | null;
  /** A roster: replacement codes sent, as signed; null for printed codes and older statements. */
  replacements: number | null;
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
    ledgerUrl: isMemberLedger(s.ledger) ? null : `/groups/${s.ledger.groupId}/ledger`,
    groupName: isMemberLedger(s.ledger) ? null : (group?.name ?? s.ledger.groupName),
    members: isMemberLedger(s.ledger) ? s.ledger.members : null,
    replacements: isMemberLedger(s.ledger) ? (s.ledger.replacements ?? null) : null,
    howVotedTotal: s.ledger.howVotedEpsilon,
    draws: s.ledger.draws,
  };
}
