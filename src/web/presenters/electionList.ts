import type { ElectionSummary } from '../../elections/draftRepo.ts';
import type { ElectionState } from '../../elections/electionRepo.ts';
import { STATUS_LABELS, type ElectionStatus } from '../../elections/status.ts';
import { describeInstant } from '../../elections/timeText.ts';
import { votingTimes } from '../../elections/votingTimes.ts';

export interface ElectionListView {
  elections: { id: string; title: string; status: ElectionStatus; statusLabel: string; opens: string; closes: string; shared: boolean }[];
}

/** "Opens …" and "Closes …" while planned; "Opened …" and "Closed …" with the real times once known (votingTimes). */
export function electionListView(rows: (ElectionSummary & { status: ElectionStatus; shared?: boolean })[], now: Date = new Date()): ElectionListView {
  return {
    elections: rows.map((r) => {
      const t = votingTimes({ ...r, state: r.state as ElectionState }, now);
      return {
        id: r.id,
        title: r.title,
        status: r.status,
        statusLabel: STATUS_LABELS[r.status],
        opens: t.opened ? `Opened ${describeInstant(t.opened, r.timeZone)}` : `Opens ${describeInstant(r.opensAt, r.timeZone)}`,
        closes: t.closed
          ? `Closed ${t.closedEarly ? 'early, ' : ''}${describeInstant(t.closed, r.timeZone)}`
          : `Closes ${describeInstant(r.closesAt, r.timeZone)}`,
        shared: r.shared ?? false,
      };
    }),
  };
}
