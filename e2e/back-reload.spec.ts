import { describe, expect, it } from 'vitest';
import type { Page, Request } from 'playwright-core';
import { useMemberBrowser } from './memberServer.ts';
import { countTurnout } from '../src/elections/turnout.ts';
import { openElectionFixture, openStoredBallots } from '../test/helpers/fixtures.ts';

/**
 * Post/redirect/get on the member's steps, in a real Chromium: after casting, Back and Reload never
 * resend a form (no "confirm form resubmission"), so every navigation from the receipt is a GET
 * answered by a page; exactly one ballot is stored; and the receipt shows in that browser only.
 * In Chromium, reloading or going back to a page that answered a POST re-sends the POST (or, for a
 * no-store page, stops at an ERR_CACHE_MISS page): both are caught below as a non-GET navigation or
 * a navigation that failed.
 */
const env = useMemberBrowser();

interface Seen {
  method: string;
  path: string;
}

function watch(page: Page): { navigations: Seen[]; dialogs: string[] } {
  const navigations: Seen[] = [];
  const dialogs: string[] = [];
  page.on('request', (r: Request) => {
    if (r.isNavigationRequest() && r.frame() === page.mainFrame()) navigations.push({ method: r.method(), path: new URL(r.url()).pathname });
  });
  page.on('dialog', (d) => {
    dialogs.push(`${d.type()}: ${d.message()}`);
    void d.dismiss();
  });
  return { navigations, dialogs };
}

/** Runs a history move or reload; a failed navigation (ERR_CACHE_MISS, a resubmission stop) is recorded, not thrown. */
async function step(what: string, move: () => Promise<unknown>, failures: string[]): Promise<void> {
  try {
    const response = (await move()) as { status(): number; request(): Request } | null;
    if (response && response.request().method() !== 'GET') failures.push(`${what}: ${response.request().method()}`);
    if (response && response.status() >= 400) failures.push(`${what}: status ${response.status()}`);
  } catch (e) {
    failures.push(`${what}: ${(e as Error).message.split('\n')[0]}`);
  }
}

describe('after casting, Back and Reload never resend a form', () => {
  it('receipt → reload → back → reload → back → reload: all GETs, no prompt, one ballot, the receipt in this browser only', async () => {
    const { ctx, organiserId, url } = env.server;
    const f = await openElectionFixture(ctx, organiserId, { title: 'Boathouse paint colour', codes: 3 });
    const context = await env.browser.newContext();
    const page = await context.newPage();
    const seen = watch(page);

    await page.goto(`${url}/vote/${f.id}`);
    await page.getByLabel('Ballot code', { exact: true }).fill(f.codes[0]!);
    await page.getByRole('button', { name: 'Show my ballot' }).click();
    await page.getByRole('group', { name: 'Tick every option you find acceptable' }).waitFor();
    await page.getByLabel('Otter', { exact: true }).check();
    await page.getByRole('button', { name: 'Read back my choices' }).click();
    await page.getByRole('heading', { name: 'Read back your ballot' }).waitFor();
    await page.getByRole('button', { name: /^Cast my/ }).click();
    await page.getByRole('heading', { name: 'Your ballot has been received' }).waitFor();
    const receipt = await page.locator('p.receipt').innerText();
    expect(receipt).toMatch(/^[0-9A-Z]{5}-[0-9A-Z]{5}$/);
    const castAt = seen.navigations.length;

    const failures: string[] = [];
    const texts: string[] = [];
    const moves: Array<[string, () => Promise<unknown>]> = [
      ['reload the receipt', () => page.reload()],
      ['back from the receipt', () => page.goBack()],
      ['reload where Back landed', () => page.reload()],
      ['back again', () => page.goBack()],
      ['reload there', () => page.reload()],
      ['forward', () => page.goForward()],
      ['forward again', () => page.goForward()],
      ['reload at the end', () => page.reload()],
    ];
    for (const [what, move] of moves) {
      await step(what, move, failures);
      texts.push(
        `${what} → ${new URL(page.url()).pathname}: ${(
          await page
            .locator('h1')
            .first()
            .innerText()
            .catch(() => '(no heading)')
        ).trim()}`,
      );
    }
    expect(failures, texts.join('\n')).toEqual([]);
    expect(seen.dialogs).toEqual([]);
    const after = seen.navigations.slice(castAt);
    expect(after.length).toBeGreaterThanOrEqual(moves.length);
    expect(after.filter((n) => n.method !== 'GET')).toEqual([]);
    // Back lands on a page that says the ballot is cast (never one that offers to cast again), with the receipt a link away.
    expect(texts[1]).toContain('This ballot has already been cast');
    expect(texts[3]).toContain('This ballot has already been cast');
    expect(texts[0]).toContain('Your ballot has been received');
    expect(texts[7]).toContain('Your ballot has been received');
    await page.getByRole('link', { name: 'Show my receipt again' }).count();
    expect(await page.locator('p.receipt').innerText()).toBe(receipt);

    // Exactly one ballot stored, with what was ticked.
    expect((await countTurnout(ctx.knex, f.id)).ballotsCast).toBe(1);
    expect(await openStoredBallots(ctx, f.id)).toEqual([[2]]);

    // Another browser at the receipt address: no receipt.
    const stranger = await env.browser.newContext();
    const other = await stranger.newPage();
    const res = await other.goto(`${url}/vote/${f.id}/receipt`);
    expect(res?.status()).toBe(404);
    await other.getByRole('heading', { name: 'There is no receipt to show here' }).waitFor();
    expect(await other.content()).not.toContain(receipt);
    await stranger.close();
    await context.close();
  });
});
