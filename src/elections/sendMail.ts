import { codeHash, generateCode } from '../custody/index.ts';
import type { UseCaseContext } from './context.ts';
import { findElection, type Election } from './electionRepo.ts';
import type { OutgoingMail } from './mailPort.ts';
import {
  claimDeliveries,
  insertPendingHashes,
  markDeliveries,
  nextStartedMailing,
  settlePending,
  withdrawPending,
  type Mailing,
  type Recipient,
} from './mailRepo.ts';
import { carriesCode, invitationText, noticeText, replacementText, type CodeMailingKind, type MailElection } from './mailText.ts';
import { startDueNotices } from './mailings.ts';

/**
 * The sender: one round of mail to rosters, run by one instance at a time (startMailLoop holds
 * the mail lock), so nothing pending at the start of a round is still in anyone's hands.
 *
 * An invitation's (or a replacement's) code lives only in this round's memory. For each batch, one transaction takes
 * the deliveries ('sending') and stores the codes' keyed hashes in pending_codes, which no cast
 * accepts. Then the messages go to the mail server. A second transaction moves the hashes of
 * accepted messages into ballot_codes (spendable) and deletes the others, and marks each delivery
 * sent or failed with the server's answer. A crash in between leaves hashes in pending_codes and
 * deliveries in 'sending': the next round deletes the hashes and queues the deliveries again, so
 * a member whose message did go out holds a dead code and gets a fresh one: never two that work.
 *
 * Hashes are written sorted by value, which is independent of who they were sent to; nothing
 * stored pairs a member with a hash, and the round logs only counts.
 */
export const MAIL_BATCH = 50;

export interface RoundResult {
  sent: number;
  failed: number;
  withdrawn: number;
}

const byValue = (a: Buffer, b: Buffer) => Buffer.compare(a, b);

function mailElection(e: Election): MailElection {
  return { id: e.id, title: e.title, opensAt: e.opensAt, closesAt: e.closesAt, timeZone: e.timeZone, contact: e.contact };
}

export async function sendDueMail(ctx: UseCaseContext, options: { batch?: number; maxBatches?: number } = {}): Promise<RoundResult> {
  const out: RoundResult = { sent: 0, failed: 0, withdrawn: 0 };
  const mail = ctx.mail;
  if (!mail) return out;
  out.withdrawn = (await ctx.knex.transaction((trx) => withdrawPending(trx))).codes;
  await startDueNotices(ctx);
  const batch = options.batch ?? MAIL_BATCH;
  for (let round = 0; round < (options.maxBatches ?? Infinity); round++) {
    const m = await nextStartedMailing(ctx.knex);
    if (!m) break;
    const e = await findElection(ctx.knex, m.electionId);
    if (!e) break;
    const r = await sendBatch(ctx, mail, m, e, batch);
    out.sent += r.sent;
    out.failed += r.failed;
  }
  return out;
}

interface Prepared {
  recipient: Recipient;
  message: OutgoingMail;
  hash: Buffer | null;
}

async function sendBatch(
  ctx: UseCaseContext,
  mail: NonNullable<UseCaseContext['mail']>,
  m: Mailing,
  e: Election,
  size: number,
): Promise<{ sent: number; failed: number }> {
  const now = ctx.now();
  // Invitations and replacements carry a code; notices do not.
  const withCode = carriesCode(m.kind);
  // A code mailed after voting closed could never be used: such deliveries fail, saying why.
  const votingOver = withCode && !(e.state === 'open' && now < e.closesAt);
  const prepared = await ctx.knex.transaction(async (trx) => {
    const recipients = await claimDeliveries(trx, m.id, size);
    if (votingOver) {
      await markDeliveries(
        trx,
        m.id,
        recipients.map((r) => r.memberId),
        'failed',
        'not sent: voting had closed',
      );
      return [] as Prepared[];
    }
    const list: Prepared[] = recipients.map((recipient) => {
      const to = { address: recipient.email, name: recipient.displayName };
      if (!withCode) {
        const words = noticeText(
          mailElection(e),
          { name: recipient.displayName },
          m.kind as Exclude<Mailing['kind'], CodeMailingKind>,
          mail.publicUrl,
        );
        return { recipient, message: { to, ...words }, hash: null };
      }
      const code = generateCode(ctx.random);
      const words = (m.kind === 'replacement' ? replacementText : invitationText)(
        mailElection(e),
        { name: recipient.displayName },
        code.display,
        mail.publicUrl,
      );
      return { recipient, message: { to, ...words }, hash: codeHash(ctx.secrets.codePepper, e.id, code.canonical) };
    });
    if (withCode) await insertPendingHashes(trx, e.id, list.map((p) => p.hash!).sort(byValue));
    return list;
  });
  if (prepared.length === 0) return { sent: 0, failed: 0 };

  const outcomes = await Promise.all(prepared.map((p) => mail.mailer.send(p.message)));

  const accepted: Buffer[] = [];
  const refused: Buffer[] = [];
  const sent: string[] = [];
  const failed = new Map<string, string[]>();
  outcomes.forEach((o, i) => {
    const p = prepared[i]!;
    if (o.ok) {
      sent.push(p.recipient.memberId);
      if (p.hash) accepted.push(p.hash);
    } else {
      failed.set(o.answer, [...(failed.get(o.answer) ?? []), p.recipient.memberId]);
      if (p.hash) refused.push(p.hash);
    }
  });
  await ctx.knex.transaction(async (trx) => {
    if (withCode) await settlePending(trx, e.id, accepted.sort(byValue), refused);
    await markDeliveries(trx, m.id, sent, 'sent');
    for (const [answer, ids] of failed) await markDeliveries(trx, m.id, ids, 'failed', answer);
  });
  return { sent: sent.length, failed: outcomes.length - sent.length };
}
