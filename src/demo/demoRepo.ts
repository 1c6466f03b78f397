import type { Db } from '../db/knex.ts';
import { toCount } from '../db/knex.ts';

/** The instance_settings row that records the demo: its primary key makes the demo happen at most once. */
export const DEMO_SETTING = 'demo';

export interface DemoRecord {
  state: 'seeding' | 'ready' | 'failed';
  startedAt: string;
  organiserId?: string;
  organiserEmail?: string;
  openElectionId?: string;
  publishedElectionId?: string;
  publishedGroupId?: string;
  /** The sample roster election, whose invented members are mailed their codes (the outbox, without SMTP). */
  mailedElectionId?: string;
  /**
   * Demo-only conveniences, kept so a second run can print them again: a few codes of the
   * sample open election, its tally passphrase and one receipt of the sample result.
   * Real elections never store codes, passphrases or receipts in readable form.
   */
  unusedCodes?: string[];
  openElectionPassphrase?: string;
  sampleReceipt?: string;
}

/** Elections owned by organisers who are not the demo's sample login. */
export async function countRealElections(db: Db): Promise<number> {
  const row = await db('elections as e').join('organisers as o', 'o.id', 'e.owner_id').where('o.demo', false).count({ n: '*' }).first();
  return toCount(row?.n ?? 0);
}

/** True when this call claimed the demo; false when a record exists already. */
export async function claimDemo(db: Db, record: DemoRecord): Promise<boolean> {
  const claimed = await db('instance_settings')
    .insert({ name: DEMO_SETTING, value: JSON.stringify(record) })
    .onConflict('name')
    .ignore()
    .returning('name');
  return claimed.length === 1;
}

export async function readDemo(db: Db): Promise<DemoRecord | null> {
  const row = await db('instance_settings').where({ name: DEMO_SETTING }).first('value');
  if (!row) return null;
  return (typeof row.value === 'string' ? JSON.parse(row.value) : row.value) as DemoRecord;
}

export async function saveDemo(db: Db, record: DemoRecord): Promise<void> {
  await db('instance_settings')
    .where({ name: DEMO_SETTING })
    .update({ value: JSON.stringify(record) });
}
