import { describe, expect, it } from 'vitest';
import type { BrowserContext, Page } from 'playwright-core';
import { screenshot } from './browser.ts';
import { DESKTOP, PHONE, seriousViolations } from './audit.ts';
import { useMemberBrowser } from './memberServer.ts';
import { castAll, openElectionFixture, tallyFixture, type ElectionFixture } from '../test/helpers/fixtures.ts';

/**
 * The member's pages in a real Chromium: every step passes axe-core with no serious or
 * critical finding (WCAG 2.2 AA rules), on a desktop and on a phone-sized viewport, and a
 * screenshot of each is kept in e2e/artifacts/ for a person to look at.
 */
const env = useMemberBrowser();

const CHOIR = {
  title: 'Spring concert programme',
  description: 'The choir sings three pieces in May.\nTick every piece you would be glad to rehearse.',
  seats: 2,
  epsilon: '1',
  options: [
    { label: 'Sea shanties medley', description: 'Four short songs, arranged for four parts.' },
    { label: 'A cappella madrigal', description: 'Slow, quiet, and hard to keep in tune.' },
    { label: 'Folk lullaby', description: '' },
    { label: 'Film theme in close harmony', description: 'Needs a piano for the rehearsals.' },
  ],
};

async function newPage(viewport: { width: number; height: number }): Promise<{ context: BrowserContext; page: Page }> {
  const context = await env.browser.newContext({ viewport, isMobile: viewport.width < 600, hasTouch: viewport.width < 600 });
  return { context, page: await context.newPage() };
}

async function checkPage(page: Page, name: string): Promise<void> {
  expect(await seriousViolations(page), name).toEqual([]);
  await screenshot(page, name);
}

async function voteThrough(page: Page, f: ElectionFixture, code: string, tick: string[], size: string): Promise<string> {
  await page.goto(`${env.server.url}/vote/${f.id}`);
  await checkPage(page, `vote-1-code-${size}`);
  await page.getByLabel('Ballot code', { exact: true }).fill(code);
  await page.getByRole('button', { name: 'Show my ballot' }).click();
  await expect(page.getByRole('group', { name: 'Tick every option you find acceptable' }).isVisible()).resolves.toBe(true);
  for (const label of tick) await page.getByLabel(label, { exact: true }).check();
  await checkPage(page, `vote-2-ballot-${size}`);
  await page.getByRole('button', { name: 'Read back my choices' }).click();
  for (const label of tick) await expect(page.getByRole('listitem').filter({ hasText: label }).count()).resolves.toBe(1);
  await checkPage(page, `vote-3-confirm-${size}`);
  await page.getByRole('button', { name: /^Cast my/ }).click();
  await expect(page.getByRole('heading', { name: 'Your ballot has been received' }).isVisible()).resolves.toBe(true);
  await checkPage(page, `vote-4-receipt-${size}`);
  const receipt = await page.locator('p.receipt').innerText();
  // Back from the receipt: the read-back again, now saying the ballot is cast (post/redirect/get).
  await page.goBack();
  await expect(page.getByRole('heading', { name: 'This ballot has already been cast' }).isVisible()).resolves.toBe(true);
  await checkPage(page, `vote-5-already-cast-${size}`);
  return receipt;
}

it('the axe check itself reports an unlabelled field (control: the audit can fail)', async () => {
  const { context, page } = await newPage(DESKTOP);
  await page.setContent(
    '<!doctype html><html lang="en"><head><title>Control</title></head><body><main><h1>Form</h1><input type="text"></main></body></html>',
  );
  expect((await seriousViolations(page)).some((v) => v.includes(' label:'))).toBe(true);
  await context.close();
});

describe('member pages in Chromium', () => {
  let f: ElectionFixture;
  const receipts: string[] = [];

  it('code entry, ballot, confirmation and receipt pass axe on desktop and phone', async () => {
    f = await openElectionFixture(env.server.ctx, env.server.organiserId, { ...CHOIR, codes: 8 });
    for (const [i, [size, viewport]] of (
      [
        ['desktop', DESKTOP],
        ['phone', PHONE],
      ] as const
    ).entries()) {
      const { context, page } = await newPage(viewport);
      receipts.push(await voteThrough(page, f, f.codes[i]!, i === 0 ? ['Folk lullaby', 'Sea shanties medley'] : [], size));
      await context.close();
    }
    expect(receipts[0]).toMatch(/^[0-9A-Z]{5}-[0-9A-Z]{5}$/);
  });

  it('the error pages pass axe too (typing slip, used code, closed)', async () => {
    const { context, page } = await newPage(DESKTOP);
    await page.goto(`${env.server.url}/vote/${f.id}`);
    const code = f.codes[2]!;
    await page.getByLabel('Ballot code', { exact: true }).fill(code.slice(0, -1) + (code.endsWith('0') ? '1' : '0'));
    await page.getByRole('button', { name: 'Show my ballot' }).click();
    await expect(page.getByRole('alert').first().innerText()).resolves.toContain('needs another look');
    await checkPage(page, 'vote-error-typo-desktop');
    // A used code shows the ballot like any other (no code-status oracle); the cast says it was used.
    await page.getByLabel('Ballot code', { exact: true }).fill(f.codes[0]!);
    await page.getByRole('button', { name: 'Show my ballot' }).click();
    await page.getByRole('button', { name: 'Read back my choices' }).click();
    await page.getByRole('button', { name: /^Cast my/ }).click();
    await expect(page.getByRole('heading', { name: 'Your code has already been used' }).isVisible()).resolves.toBe(true);
    await checkPage(page, 'vote-error-used-desktop');
    await context.close();
  });

  it('the result page, before and after publication, passes axe on desktop and phone', async () => {
    await castAll(env.server.ctx, f, [[0, 1], [1, 3], [2]], 3);
    const { context, page } = await newPage(DESKTOP);
    await page.goto(`${env.server.url}/results/${f.id}`);
    await checkPage(page, 'result-pending-desktop');
    env.server.clock.advance(8 * 24 * 3600_000);
    await page.goto(`${env.server.url}/vote/${f.id}`);
    await checkPage(page, 'vote-error-closed-desktop');
    const winners = await tallyFixture(env.server.ctx, f, true);
    await page.goto(`${env.server.url}/results/${f.id}`);
    await expect(page.locator('.announce-name').allInnerTexts()).resolves.toEqual(winners);
    await checkPage(page, 'result-published-desktop');
    await page.getByLabel('Receipt', { exact: true }).fill(receipts[0]!.toLowerCase());
    await page.getByRole('button', { name: 'Check receipt' }).click();
    await expect(page.getByRole('status').filter({ hasText: 'This receipt is among the ballots counted.' }).count()).resolves.toBe(1);
    await checkPage(page, 'result-receipt-found-desktop');
    await context.close();
    const phone = await newPage(PHONE);
    await phone.page.goto(`${env.server.url}/results/${f.id}`);
    await checkPage(phone.page, 'result-published-phone');
    await phone.context.close();
  });
});
