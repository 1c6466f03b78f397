/**
 * The test files that spawn child processes (the real server, the installed binary, `npm start`,
 * the README's commands, kills). They run in the `slow` project (`npm run test:slow`, run by
 * `.ci/run`), not in `npm test`. `test/unit/foundation/slowFiles.test.ts` fails when a file in
 * test/unit or test/integration spawns a process and is not listed here.
 */
export const SLOW_TEST_FILES: readonly string[] = [
  'test/integration/custody/everyDrawPublished.test.ts',
  'test/integration/foundation/dirLock.test.ts',
  'test/integration/foundation/noDrawDurationInLogs.test.ts',
  'test/integration/foundation/npmStart.test.ts',
  'test/integration/foundation/process.test.ts',
  'test/integration/foundation/readme.test.ts',
  'test/integration/foundation/receiptAfterKill.test.ts',
  'test/integration/mail/invitations.test.ts',
  'test/integration/web/offline-verifier.test.ts',
  'test/unit/cli/bin.test.ts',
];
