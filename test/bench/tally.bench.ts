/**
 * Tally: open and count sealed ballots (20 options) from PostgreSQL with the compiled tally, in
 * a child process so its peak RSS is measured alone, at 10,000 and 100,000 ballots. Ceiling: raw
 * crypto_box_seal_open on the same ciphertexts in memory, in this thread, times the workers the
 * tally used. Invented data: a tenants' association choosing which of 20 repairs to fund.
 */
import { spawn } from 'node:child_process';
import crypto from 'node:crypto';
import { fileURLToPath } from 'node:url';
import { createElectionKeys, encodeAndSeal, unwrapElectionKey } from '../../src/custody/index.ts';
import { sodium } from '../../src/custody/sodium.ts';
import { openDatabase } from '../../src/db/knex.ts';
import { migrateLatest } from '../../src/db/migrate.ts';
import { figure, type BenchOptions, type Figure } from './support/figures.ts';
import { postgresAnswers, scratchDatabase } from './support/postgres.ts';

const D = 20;
const PASS = 'boiler, roof, then the lift';
const KDF = { memoryKiB: 1024, iterations: 1, parallelism: 1 }; // key wrapping is not what is measured
const CHILD = fileURLToPath(new URL('./support/tallyChild.mjs', import.meta.url));

interface ChildResult {
  seconds: number;
  ballots: number;
  unreadable: number;
  threads: number;
  maxRssMB: number;
}

function countInChild(job: object): Promise<ChildResult> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, [CHILD], { stdio: ['pipe', 'pipe', 'inherit'] });
    let out = '';
    child.stdout.on('data', (d) => (out += d));
    child.on('exit', (code) => (code === 0 ? resolve(JSON.parse(out) as ChildResult) : reject(new Error(`tally child exited ${code}`))));
    child.stdin.end(JSON.stringify(job));
  });
}

export async function run(opts: BenchOptions): Promise<Figure[]> {
  if (!(await postgresAnswers())) {
    console.log('  PostgreSQL does not answer (set BENCH_DATABASE_URL): skipping the tally');
    return [];
  }
  const [small, large] = opts.quick ? [1_000, 10_000] : [10_000, 100_000];
  const scratch = await scratchDatabase();
  const db = openDatabase({ engine: 'postgres', url: scratch.url, poolMax: 2 });
  try {
    await migrateLatest(db.knex);
    const owner = crypto.randomUUID();
    await db.knex('organisers').insert({ id: owner, email: `${owner}@tenants.example`, password_hash: 'x' });
    const sample: Buffer[] = [];
    const results = new Map<number, ChildResult>();
    let keys: { publicKey: Buffer; secretKey: Uint8Array } | undefined;
    for (const n of [small, large]) {
      const electionId = crypto.randomUUID();
      const { publicKey, wrapped } = await createElectionKeys({ passphrase: PASS, electionId, kdf: KDF });
      const secretKey = await unwrapElectionKey(wrapped, PASS, electionId);
      await db.knex('elections').insert({
        id: electionId,
        owner_id: owner,
        title: 'Repairs to fund this year',
        state: 'closed',
        epsilon: '1',
        opens_at: '2026-05-01T00:00:00Z',
        closes_at: '2026-05-08T00:00:00Z',
        public_key: publicKey,
      });
      await db
        .knex('options')
        .insert(Array.from({ length: D }, (_, position) => ({ election_id: electionId, position, label: `Repair ${position + 1}` })));
      for (let i = 0; i < n; i += 1000) {
        const rows = [];
        for (let j = i; j < Math.min(n, i + 1000); j++) {
          const sealed = encodeAndSeal(
            publicKey,
            electionId,
            D,
            [...Array(D).keys()].filter(() => crypto.randomInt(4) === 0),
          );
          if (n === large && sample.length < 20_000) sample.push(sealed);
          rows.push({ id: crypto.randomUUID(), election_id: electionId, sealed });
        }
        await db.knex('ballots').insert(rows);
      }
      await db.knex.raw('ANALYZE ballots');
      const r = await countInChild({
        url: scratch.url,
        electionId,
        publicKey: publicKey.toString('hex'),
        secretKey: Buffer.from(secretKey).toString('hex'),
        optionCount: D,
      });
      if (r.ballots !== n || r.unreadable !== 0) throw new Error('the benchmark tally miscounted');
      results.set(n, r);
      if (n === large) keys = { publicKey, secretKey };
    }
    // The ceiling: crypto_box_seal_open alone, on the same ciphertexts, in memory, one thread.
    const plain = Buffer.alloc(sample[0]!.length - sodium.crypto_box_SEALBYTES);
    const t0 = performance.now();
    for (const c of sample) if (!sodium.crypto_box_seal_open(plain, c, keys!.publicKey, keys!.secretKey)) throw new Error('did not open');
    const rawPerThread = sample.length / ((performance.now() - t0) / 1000);
    const big = results.get(large)!;
    const tiny = results.get(small)!;
    const fmt = (n: number) => n.toLocaleString('en');
    return [
      figure(
        `tally, ${fmt(large)} ballots from PostgreSQL (${big.threads || 1} thread${big.threads > 1 ? 's' : ''}): ballots/s`,
        large / big.seconds,
        'ballots/s',
        rawPerThread * Math.max(1, big.threads),
        { atLeastRatio: 0.6 },
      ),
      figure(`tally, ${fmt(small)} ballots from PostgreSQL: ballots/s`, small / tiny.seconds, 'ballots/s', rawPerThread * Math.max(1, tiny.threads)),
      figure(`tally peak RSS, ${fmt(small)} ballots`, tiny.maxRssMB, 'MB', null, { below: 300 }),
      // Flat: the ceiling here is the small tally's RSS, and the ratio should stay near 1.
      figure(`tally peak RSS, ${fmt(large)} ballots (ceiling: RSS at ${fmt(small)})`, big.maxRssMB, 'MB', tiny.maxRssMB, { atMostRatio: 1.25 }),
    ];
  } finally {
    await db.close();
    await scratch.drop();
  }
}
