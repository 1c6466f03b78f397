import { expect, it } from 'vitest';
import { screenshot } from './browser.ts';
import { watchForScript } from './audit.ts';
import { useMemberBrowser } from './memberServer.ts';
import { openElectionFixture, tallyFixture } from '../test/helpers/fixtures.ts';

/**
 * Hostile option labels (OWASP XSS Filter Evasion examples: a script element and an attribute
 * break-out into an <img onerror>) are shown as text on every member page and run nothing.
 */
const SCRIPT = '<script>alert(1)</script>';
const BREAKOUT = '"><img src=x onerror=alert(1)>';

const env = useMemberBrowser();

it('shows hostile labels as text through ballot, confirmation and result, with no dialog and no console error', async () => {
  const f = await openElectionFixture(env.server.ctx, env.server.organiserId, {
    title: `Choir social ${BREAKOUT}`,
    description: SCRIPT,
    seats: 2,
    options: [{ label: SCRIPT, description: BREAKOUT }, { label: BREAKOUT }, { label: 'Picnic in the park' }],
  });
  const context = await env.browser.newContext();
  const page = await context.newPage();
  const seen = watchForScript(page);

  await page.goto(`${env.server.url}/vote/${f.id}`);
  expect(await page.locator('h1').innerText()).toBe(`Choir social ${BREAKOUT}`);
  await page.getByLabel('Ballot code', { exact: true }).fill(f.codes[0]!);
  await page.getByRole('button', { name: 'Show my ballot' }).click();
  await page.getByLabel(SCRIPT, { exact: true }).check();
  await page.getByLabel(BREAKOUT, { exact: true }).check();
  await screenshot(page, 'escaping-ballot');
  await page.getByRole('button', { name: 'Read back my choices' }).click();
  expect(await page.locator('ul.ticked-list li').allInnerTexts()).toEqual([SCRIPT, BREAKOUT]);
  await page.getByRole('button', { name: 'Cast my ballot' }).click();
  await page.getByRole('heading', { name: 'Your ballot has been received' }).waitFor();

  env.server.clock.advance(8 * 24 * 3600_000);
  const winners = await tallyFixture(env.server.ctx, f, true);
  await page.goto(`${env.server.url}/results/${f.id}`);
  expect(await page.locator('.announce-name').allInnerTexts()).toEqual(winners);
  await screenshot(page, 'escaping-result');

  // Nothing was parsed as markup: no image, and the only script-free page stays script-free.
  expect(await page.locator('img').count()).toBe(0);
  expect(await page.locator('script').count()).toBe(0);
  expect(seen.dialogs).toEqual([]);
  expect(seen.errors).toEqual([]);
  await context.close();
});
