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
    expect(stdout).toMatch(/^only@club\.example\tadded \d{4}-\d{2}-\d{2}\tadministrator\n$/);
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
    [['promote'], '--email is missing'],
    [['elevate'], 'unknown action "elevate"'],
  ])('%j says what is wrong', async (args, message) => {
    await expect(run(args)).rejects.toThrow(message);
  });

  it('promotes an organiser to administrator and demotes them, recorded as the operator’s doing', async () => {
    await makeOrganiser(ctx, 'second@club.example');
    const admin = async () => (await db.knex('organisers').where({ email: 'second@club.example' }).first('admin')).admin as boolean;
    expect(await admin()).toBe(false);
    expect((await run(['promote', '--email', 'Second@club.example'])).stdout).toContain('second@club.example is now an administrator');
    expect(await admin()).toBe(true);
    expect((await run(['list'])).stdout).toMatch(/second@club\.example\tadded \d{4}-\d{2}-\d{2}\tadministrator\n/);
    expect((await run(['demote', '--email', 'second@club.example'])).stdout).toContain('is now an ordinary organiser');
    expect(await admin()).toBe(false);
    const events = await db.knex('audit_events').whereIn('action', ['organiser-promoted', 'organiser-demoted']).select('organiser_id');
    expect(events).toEqual([{ organiser_id: null }, { organiser_id: null }]);
    await expect(run(['promote', '--email', 'nobody@club.example'])).rejects.toThrow('no organiser with the email');
  });

  it('makes 100-bit passwords from the Crockford alphabet, grouped for reading out', () => {
    expect(randomPassword(() => new Uint8Array(20))).toBe('0000-0000-0000-0000-0000');
    expect(randomPassword(() => new Uint8Array(20).fill(31))).toBe('ZZZZ-ZZZZ-ZZZZ-ZZZZ-ZZZZ');
  });
});
