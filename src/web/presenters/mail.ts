import type { MailPage, MailingView } from '../../elections/mailings.ts';
import type { Mailer } from '../../elections/mailPort.ts';

/** The organiser's mail page: where mail goes, the invitations' progress, the notices. */
export interface MailPageView {
  id: string;
  title: string;
  state: string;
  rosterName: string | null;
  members: number;
  seesAddresses: boolean;
  where: { smtp: string | null; outbox: string | null };
  invitation: (MailingView & { total: number; done: number }) | null;
  notices: (MailingView & { label: string; total: number })[];
  /** Replacements asked for on the ballot page: per address only queued, sent or failed, like the invitation. */
  replacement: (MailingView & { total: number }) | null;
  canSchedule: boolean;
  canResend: boolean;
}

export function noticeLabel(m: Pick<MailingView, 'kind' | 'hoursBefore'>): string {
  if (m.kind === 'opens') return 'Voting is open';
  if (m.kind === 'closing') return `${m.hoursBefore} hour${m.hoursBefore === 1 ? '' : 's'} before voting closes`;
  if (m.kind === 'published') return 'The result is published';
  return 'Ballot codes';
}

const total = (m: MailingView) => m.counts.queued + m.counts.sending + m.counts.sent + m.counts.failed;

export function mailPageView(page: MailPage, where: Mailer['where'] | null, now: Date): MailPageView {
  const e = page.election;
  const inv = page.mailings.find((m) => m.kind === 'invitation') ?? null;
  const rep = page.mailings.find((m) => m.kind === 'replacement') ?? null;
  const votingOpen = e.state === 'open' && now < e.closesAt;
  return {
    id: e.id,
    title: e.title,
    state: e.state,
    rosterName: page.roster?.name ?? null,
    members: page.roster?.members ?? 0,
    seesAddresses: page.seesAddresses,
    where: { smtp: where?.kind === 'smtp' ? where.host : null, outbox: where?.kind === 'outbox' ? where.folder : null },
    invitation: inv ? { ...inv, total: total(inv), done: inv.counts.sent + inv.counts.failed } : null,
    notices: page.mailings
      .filter((m) => m.kind !== 'invitation' && m.kind !== 'replacement')
      .map((m) => ({ ...m, label: noticeLabel(m), total: total(m) })),
    replacement: rep ? { ...rep, total: total(rep) } : null,
    canSchedule: page.roster !== null && e.state !== 'published',
    canResend: votingOpen && (inv?.counts.failed ?? 0) + (rep?.counts.failed ?? 0) > 0,
  };
}
