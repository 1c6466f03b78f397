import { isMemberLedger, type StatementEnvelope } from '../mechanism/index.ts';
import type { UseCaseContext } from './context.ts';
import { findGroup, type MemberGroup } from './ledgerRepo.ts';
import { findStatement } from './signDraw.ts';
import { findSigningKey, type SigningKey } from './signingKeyRepo.ts';

/** A published result's signed statement with the key that signed it and its member group, as they are now. */
export interface SignedStatementFacts {
  envelope: StatementEnvelope;
  key: SigningKey | null;
  group: MemberGroup | null;
}

/** What the result page links to beside a published result; null before a statement is signed. One read-only transaction. */
export async function loadSignedStatement(ctx: UseCaseContext, electionId: string): Promise<SignedStatementFacts | null> {
  return ctx.knex.transaction(async (trx) => {
    const signed = await findStatement(trx, electionId);
    if (!signed) return null;
    const key = await findSigningKey(trx, signed.envelope.signature.keyId);
    const ledger = signed.envelope.statement.ledger;
    const group = isMemberLedger(ledger) ? null : await findGroup(trx, ledger.groupId);
    return { envelope: signed.envelope, key, group };
  });
}
