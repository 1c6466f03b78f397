// Counts one election's sealed ballots with the compiled tally (dist/), in a process of its own
// so its peak RSS is the tally's alone. Reads its job as JSON on stdin, prints one JSON line.
import { openDatabase } from '../../../dist/src/db/knex.js';
import { countApprovals } from '../../../dist/src/elections/tallyCounter.js';
import { chooseThreads } from '../../../dist/src/elections/tallyCounter.js';

let input = '';
for await (const chunk of process.stdin) input += chunk;
const job = JSON.parse(input);
const db = openDatabase({ engine: 'postgres', url: job.url, poolMax: 2 });
try {
  const t0 = performance.now();
  const tally = await countApprovals(db.knex, {
    electionId: job.electionId,
    publicKey: Buffer.from(job.publicKey, 'hex'),
    secretKey: Buffer.from(job.secretKey, 'hex'),
    shredKey: null, // the bench stores bare sealed boxes, as elections made before the shred layer
    optionCount: job.optionCount,
    threads: 'auto',
  });
  const seconds = (performance.now() - t0) / 1000;
  const threads = chooseThreads('auto', tally.ballots);
  process.stdout.write(
    `${JSON.stringify({ seconds, ballots: tally.ballots, unreadable: tally.unreadable, threads, maxRssMB: process.resourceUsage().maxRSS / 1024 })}\n`,
  );
} finally {
  await db.close();
}
