import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signIn } from '../../../src/accounts/signIn.ts';
import { SignInFailed } from '../../../src/accounts/errors.ts';
import { makeOrganiserCommand, randomPassword } from '../../../src/cli/organiserCommand.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { makeOrganiser, organiseContext, PASSWORD } from '../web/organiseSupport.ts';

/** `veiltally organiser`: the operator's way in when the only organiser is locked out. */
describe.each(engines)('veiltally organiser [%s]', (engine) => {
  let db: TestDatabase;
  let ctx: UseCaseContext;
  beforeAll(async () => {
    db = await freshDatabase(engine);
    ctx = organiseContext(db);
  });
  afterAll(async () => {
    await db.dispose();
  });

  async function run(args: string[]) {
    let stdout = '';
    const command = makeOrganiserCommand(async () => ({ ctx, close: async () => undefined }));
    const code = await command.run(args, { stdout: (s) => (stdout += s), stderr: () => undefined });
    return { code, stdout };
  }

  it('lists the organisers who can sign in', async () => {
    expect((await run(['list'])).stdout).toContain('No organisers yet');
    await makeOrganiser(ctx, 'only@club.example');
    const { code, stdout } = await run(['list']);
    expect(code).toBe(0);
    expect(stdout).toMatch(/^only@club\.example\tadded \d{4}-\d{2}-\d{2}\n$/);
  });

  it('resets the only organiser’s password: the printed one signs in, the old one no longer does, and it is recorded', async () => {
    const { code, stdout } = await run(['reset-password', '--email', ' ONLY@club.example ']);
    expect(code).toBe(0);
    const password = /New password for only@club\.example: ([0-9A-Z-]{24})\n/.exec(stdout)![1]!;
    await expect(signIn(ctx, { email: 'only@club.example', password: PASSWORD })).rejects.toBeInstanceOf(SignInFailed);
    await expect(signIn(ctx, { email: 'only@club.example', password })).resolves.toBeDefined();
    const event = await db.knex('audit_events').where({ action: 'organiser-password-reset' }).first();
    expect(event.organiser_id).toBeNull(); // done by the operator, not by an organiser
    expect(JSON.stringify(event.detail)).not.toContain(password);
  });

  it.each([
    [['reset-password'], '--email is missing'],
    [['reset-password', '--email', 'nobody@club.example'], 'no organiser with the email nobody@club.example'],
    [['reset-password', '--emial', 'x'], 'unknown option "--emial"'],
    [[], 'say what to do'],
    [['promote'], 'unknown action "promote"'],
  ])('%j says what is wrong', async (args, message) => {
    await expect(run(args)).rejects.toThrow(message);
  });

  it('makes 100-bit passwords from the Crockford alphabet, grouped for reading out', () => {
    expect(randomPassword(() => new Uint8Array(20))).toBe('0000-0000-0000-0000-0000');
    expect(randomPassword(() => new Uint8Array(20).fill(31))).toBe('ZZZZ-ZZZZ-ZZZZ-ZZZZ-ZZZZ');
  });
});
