import { describe, expect, it } from 'vitest';
import type { BrowserContext, Page } from 'playwright-core';
import { screenshot } from './browser.ts';
import { DESKTOP, PHONE, seriousViolations } from './audit.ts';
import { useMemberBrowser } from './memberServer.ts';
import { FIXTURE_PASSWORD } from '../test/helpers/fixtures.ts';

/**
 * The election form for a busy organiser (issue 22 item 3), in Chromium: the new form's height at
 * desktop and phone widths (the advanced settings folded under "More settings"), the folded
 * section opening itself where it needs attention, and axe on each state.
 */
const env = useMemberBrowser();

/** Ceilings for the new form's full height; the form measured 6,352 px (1280 wide) and 8,540 px (390 wide) before folding. */
const CEILING = { desktop: 4200, phone: 5700 } as const;

async function newPage(viewport: { width: number; height: number }): Promise<{ context: BrowserContext; page: Page }> {
  const context = await env.browser.newContext({ viewport, isMobile: viewport.width < 600, hasTouch: viewport.width < 600 });
  return { context, page: await context.newPage() };
}

async function signIn(page: Page): Promise<void> {
  await page.goto(`${env.server.url}/organise/sign-in`);
  await page.locator('#email').fill('organiser@rowing.example');
  await page.getByLabel('Password', { exact: true }).fill(FIXTURE_PASSWORD);
  await page.locator('form.stack button[type=submit]').click();
  await page.waitForURL(`${env.server.url}/organise`);
}

/** The whole document's height in CSS pixels, as a person scrolls it. */
const pageHeight = (page: Page): Promise<number> =>
  page.evaluate(() => (globalThis as unknown as { document: { documentElement: { scrollHeight: number } } }).document.documentElement.scrollHeight);

describe('the election form, in Chromium', () => {
  it.each([
    ['desktop', DESKTOP],
    ['phone', PHONE],
  ] as const)('fits under its ceiling at %s width', async (size, viewport) => {
    const { context, page } = await newPage(viewport);
    await signIn(page);
    await page.goto(`${env.server.url}/organise/elections/new`);
    const height = await pageHeight(page);
    console.log(`election form height at ${viewport.width} px: ${height} px`);
    expect(await seriousViolations(page), size).toEqual([]);
    await screenshot(page, `election-form-${size}`);
    expect(height).toBeLessThanOrEqual(CEILING[size]);
    await context.close();
  });

  it('"More settings" opens by itself when one of its answers needs a look, and its link in the summary reaches the field', async () => {
    const { context, page } = await newPage(DESKTOP);
    await signIn(page);
    await page.goto(`${env.server.url}/organise/elections/new`);
    await expect(page.locator('#more-settings').getAttribute('open')).resolves.toBeNull();
    await expect(page.locator('#retentionDays').isVisible()).resolves.toBe(false);
    await page.locator('#more-settings > summary').click();
    await page.getByLabel('Keep them sealed for a number of days, then shred them').check();
    await page.getByLabel('Days to keep them sealed', { exact: true }).fill('91');
    await page.getByRole('button', { name: 'Create the draft election' }).click();
    await page.waitForURL(`${env.server.url}/organise/elections/new`);
    await expect(page.locator('#more-settings').getAttribute('open')).resolves.toBe('');
    await page.locator('.form-check-links a[href="#retentionDays"]').click();
    await expect(page.locator('#retentionDays').isVisible()).resolves.toBe(true);
    expect(await seriousViolations(page)).toEqual([]);
    await context.close();
  });

  it('"Add 5 more rows" brings back every field as typed, the passphrase included', async () => {
    const { context, page } = await newPage(PHONE);
    await signIn(page);
    await page.goto(`${env.server.url}/organise/elections/new`);
    const text: [string, string][] = [
      ['#title', 'Name the new sculling boat'],
      ['#description', 'Two seats.\nPick every name you like.'],
      ['#contact', 'Ask the boathouse captain'],
      ['#option-1-label', 'Heron'],
      ['#option-1-description', 'Grey and patient'],
      ['#option-2-label', 'Kingfisher'],
      ['#option-3-label', 'Otter'],
      ['#option-4-label', 'Swift'],
      ['#seats', '2'],
      ['#epsilon', '1.5'],
      ['#expectedVoters', '24'],
      ['#opensAt', '2026-06-11T18:00'],
      ['#closesAt', '2026-06-13T20:30'],
      ['#passphrase', 'heron otter swift kingfisher'],
      ['#passphraseAgain', 'heron otter swift kingfisher'],
    ];
    for (const [sel, v] of text) await page.locator(sel).fill(v);
    await page.locator('#more-settings > summary').click();
    const ticks = ['#neighbour-add-remove', '#rule-permute-and-flip', '#publishTurnout-yes', '#retention-keep', '#liveTurnout-on'];
    for (const sel of ticks) await page.locator(sel).check();
    const more: [string, string][] = [
      ['#retentionDays', '12'],
      ['#memberGroup', 'Sculling section'],
      ['#liveTurnoutEpsilon', '0.25'],
    ];
    for (const [sel, v] of more) await page.locator(sel).fill(v);
    await page.getByRole('button', { name: 'Add 5 more rows' }).click();
    await page.waitForURL(/\/organise\/elections\/new\/guidance#more-rows$/);
    await page.locator('#option-9-label').waitFor();
    for (const [sel, v] of [...text, ...more]) await expect(page.locator(sel).inputValue(), sel).resolves.toBe(v);
    for (const sel of ticks) await expect(page.locator(sel).isChecked(), sel).resolves.toBe(true);
    expect(page.url()).not.toContain('heron');
    await context.close();
  });
});
