import { afterAll, beforeAll, expect, it } from 'vitest';
import fs from 'node:fs';
import path from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { launchChromium, screenshot } from './browser.ts';
import { seriousViolations, watchForScript } from './audit.ts';
import { REPO_ROOT, startServer, type RunningServer } from '../test/helpers/server.ts';

/**
 * A newcomer's first minute on a fresh `npm start`: one click on the first-run page adds the
 * sample elections, and both can be explored. The real server process on a fresh embedded data
 * directory (the demo's home), touched only through the browser.
 *
 * With SAVE_README_SCREENSHOTS=1 the ballot and result pages are also saved to e2e/screenshots/,
 * the images the README shows; otherwise screenshots go to e2e/artifacts/ only.
 */
const README_SHOTS = path.join(REPO_ROOT, 'e2e', 'screenshots');

let server: RunningServer;
let browser: Browser;
let page: Page;
let seen: ReturnType<typeof watchForScript>;

beforeAll(async () => {
  server = await startServer();
  browser = await launchChromium();
  page = await (await browser.newContext({ viewport: { width: 960, height: 1000 } })).newPage();
  seen = watchForScript(page);
});
afterAll(async () => {
  await browser?.close();
  await server?.stop();
});

async function shot(name: string): Promise<void> {
  await screenshot(page, `demo-${name}`);
  if (process.env.SAVE_README_SCREENSHOTS === '1') {
    fs.mkdirSync(README_SHOTS, { recursive: true });
    await page.screenshot({ path: path.join(README_SHOTS, `${name}.png`), fullPage: false });
  }
}

let codes: string[] = [];
let receipt = '';
let ballotHref = '';
let resultHref = '';

it('one click on the first-run page adds the sample elections and signs in as the marked demo organiser', async () => {
  await page.goto(`${server.url}/organise/first-run`);
  expect(await seriousViolations(page)).toEqual([]);
  const button = page.getByRole('button', { name: 'Explore with sample elections' });
  // A double click submits twice; the server adds the sample elections once.
  await Promise.all([page.waitForURL('**/organise/demo', { timeout: 110_000 }), button.dblclick()]);
  expect(await page.locator('h1').innerText()).toBe('Sample elections');
  expect(await page.locator('header').innerText()).toContain('Demo organiser');
  expect(await seriousViolations(page)).toEqual([]);
  codes = await page.locator('.demo-codes code').allInnerTexts();
  expect(codes).toHaveLength(5);
  receipt = (await page.locator('#published-heading ~ p code').first().innerText()).trim();
  ballotHref = (await page.getByRole('link', { name: 'Open the ballot' }).getAttribute('href'))!;
  resultHref = (await page.getByRole('link', { name: 'Open the result' }).getAttribute('href'))!;

  await page.goto(`${server.url}/organise`);
  expect(await page.locator('main').innerText()).toContain('Name the new coxed four (sample election)');
  expect(await page.locator('main').innerText()).toContain('Which three repairs first? (sample election)');
  // Each appears once: the double click added nothing twice.
  expect(await page.getByRole('link', { name: /Name the new coxed four/ }).count()).toBe(1);
});

it('a member votes in the open sample election with a printed code', async () => {
  const member = await (await browser.newContext({ viewport: { width: 960, height: 1000 } })).newPage();
  const prev = page;
  page = member;
  await page.goto(`${server.url}${ballotHref}`);
  await page.locator('#code').fill(codes[0]!);
  await page.locator(`form[action$="/ballot"] button[type=submit]`).click();
  await page.waitForURL(/\/ballot$/);
  await page.getByLabel('Kingfisher').check();
  await page.getByLabel('Second Wind').check();
  await shot('ballot');
  expect(await seriousViolations(page)).toEqual([]);
  await page.locator('form[action$="/confirm"] button[type=submit]').click();
  await page.locator('form[action$="/cast"] button[type=submit]').first().click();
  await page.waitForLoadState();
  expect(await page.locator('main').innerText()).toMatch(/receipt/i);
  await member.close();
  page = prev;
});

it('the published sample result shows three winners and counts the printed receipt', async () => {
  await page.goto(`${server.url}${resultHref}`);
  expect(await page.locator('h1').innerText()).toContain('Which three repairs first?');
  expect(await page.locator('main').innerText()).toMatch(/in draw order/i);
  await shot('result');
  expect(await seriousViolations(page)).toEqual([]);
  await page.locator('input[name="receipt"]').fill(receipt);
  await page.locator('form[action*="/receipt"] button[type=submit]').click();
  expect(await page.locator('main').innerText()).toContain('This receipt is among the ballots counted.');
});

it('the help pages render and pass axe', async () => {
  for (const p of ['/help/how-the-result-is-drawn', '/help/choosing-epsilon?options=8&seats=3&epsilon=1.5']) {
    await page.goto(`${server.url}${p}`);
    expect(await seriousViolations(page)).toEqual([]);
  }
  expect(seen.errors).toEqual([]);
  expect(seen.dialogs).toEqual([]);
});
