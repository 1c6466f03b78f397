import type { Db } from '../db/knex.ts';

/**
 * Actions the public timeline shows. Everything else stays on the organiser's dashboard.
 * Details never hold secrets, codes, ballots or counts.
 */
export const PUBLIC_ACTIONS = ['created', 'opened', 'closed', 'tallied', 'published', 'shredded', 'closing-extended', 'description-edited'] as const;

export interface AuditEvent {
  electionId: string | null;
  organiserId: string | null;
  action: string;
  detail?: Record<string, string | number | boolean | null>;
}

export async function recordEvent(db: Db, event: AuditEvent, at: Date): Promise<void> {
  await db('audit_events').insert({
    election_id: event.electionId,
    organiser_id: event.organiserId,
    action: event.action,
    detail: JSON.stringify(event.detail ?? {}),
    public: (PUBLIC_ACTIONS as readonly string[]).includes(event.action),
    at,
  });
}

export interface AuditRow {
  action: string;
  detail: Record<string, unknown>;
  at: Date;
  organiserEmail: string | null;
}

export async function listEvents(db: Db, electionId: string, options: { publicOnly: boolean }): Promise<AuditRow[]> {
  const q = db('audit_events as a')
    .leftJoin('organisers as o', 'o.id', 'a.organiser_id')
    .where('a.election_id', electionId)
    .orderBy([
      { column: 'a.at', order: 'asc' },
      { column: 'a.id', order: 'asc' },
    ])
    .select('a.action', 'a.detail', 'a.at', 'o.email as organiser_email');
  if (options.publicOnly) q.andWhere('a.public', true);
  const rows = await q;
  return rows.map((r) => ({
    action: r.action as string,
    detail: (typeof r.detail === 'string' ? JSON.parse(r.detail) : r.detail) as Record<string, unknown>,
    at: new Date(r.at),
    organiserEmail: options.publicOnly ? null : ((r.organiser_email as string | null) ?? null),
  }));
}
