import type { ElectionSummary } from '../../elections/draftRepo.ts';
import { STATUS_LABELS, type ElectionStatus } from '../../elections/status.ts';
import { describeInstant } from '../../elections/timeText.ts';

export interface ElectionListView {
  elections: { id: string; title: string; status: ElectionStatus; statusLabel: string; opens: string; closes: string }[];
}

export function electionListView(rows: (ElectionSummary & { status: ElectionStatus })[]): ElectionListView {
  return {
    elections: rows.map((r) => ({
      id: r.id,
      title: r.title,
      status: r.status,
      statusLabel: STATUS_LABELS[r.status],
      opens: describeInstant(r.opensAt, r.timeZone),
      closes: describeInstant(r.closesAt, r.timeZone),
    })),
  };
}
