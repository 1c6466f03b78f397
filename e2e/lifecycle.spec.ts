import { afterAll, beforeAll, expect, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { launchChromium, screenshot } from './browser.ts';
import { PHONE, DESKTOP, seriousViolations, watchForScript } from './audit.ts';
import { startServer, type RunningServer } from '../test/helpers/server.ts';

/**
 * A whole election through the UI of the real server process, nothing set up behind its back:
 * first-run setup, a new election, codes, opening, five members voting in separate browser
 * contexts, closing, the tally unlocked with the passphrase, publication, and a public
 * result page that names a winner and recognises a member's receipt.
 */
let server: RunningServer;
let browser: Browser;

beforeAll(async () => {
  server = await startServer();
  browser = await launchChromium();
});
afterAll(async () => {
  await browser?.close();
  await server?.stop();
});

const EMAIL = 'secretary@tenants.example';
const PASSWORD = 'stairwell lift bins rota';
const PASSPHRASE = 'boiler roof gutter window';
const OPTIONS = ['Fix the lift', 'Repaint the stairwell', 'New bike shed', 'Brighter car park lights'];
const BALLOTS = [[0, 1], [0], [1, 3], [0, 2, 3], []];

async function audited(page: Page, name: string): Promise<void> {
  expect(await seriousViolations(page), name).toEqual([]);
  await screenshot(page, `${name}-desktop`);
  await page.setViewportSize(PHONE);
  expect(await seriousViolations(page), `${name} (phone)`).toEqual([]);
  await screenshot(page, `${name}-phone`);
  await page.setViewportSize(DESKTOP);
}

async function vote(code: string, electionId: string, ticks: number[]): Promise<string> {
  const context = await browser.newContext({ viewport: DESKTOP });
  const page = await context.newPage();
  const seen = watchForScript(page);
  await page.goto(`${server.url}/vote/${electionId}`);
  await page.getByLabel('Ballot code', { exact: true }).fill(code);
  await page.getByRole('button', { name: 'Show my ballot' }).click();
  for (const i of ticks) await page.getByLabel(OPTIONS[i]!, { exact: true }).check();
  await page.getByRole('button', { name: 'Read back my choices' }).click();
  await page.getByRole('button', { name: /^Cast my/ }).click();
  await page.getByRole('heading', { name: 'Your ballot has been received' }).waitFor();
  const receipt = await page.locator('p.receipt').innerText();
  expect(seen.errors).toEqual([]);
  await context.close();
  return receipt;
}

it('runs an election from first-run setup to a published result, entirely through the pages', async () => {
  const context = await browser.newContext({ viewport: DESKTOP });
  const page = await context.newPage();

  await page.goto(`${server.url}/organise/first-run`);
  await page.getByLabel('Email address', { exact: true }).fill(EMAIL);
  await page.getByLabel('Password', { exact: true }).fill(PASSWORD);
  await page.getByLabel('Password again', { exact: true }).fill(PASSWORD);
  await page.getByRole('button', { name: 'Create the account and sign in' }).click();
  await page.waitForURL(`${server.url}/organise`);

  await page.goto(`${server.url}/organise/elections/new`);
  await page.getByLabel('Title', { exact: true }).fill('Which repairs to fund this year');
  await page.getByLabel('Description (optional)', { exact: true }).fill('The association has money for some repairs.\nTick every one you support.');
  for (const [i, label] of OPTIONS.entries()) await page.getByLabel(`Option ${i + 1} label`, { exact: true }).fill(label);
  await page.getByLabel('Expected number of voters (optional)', { exact: true }).fill('5');
  await page.getByLabel('Passphrase', { exact: true }).fill(PASSPHRASE);
  await page.getByLabel('Passphrase again', { exact: true }).fill(PASSPHRASE);
  await audited(page, 'organise-election-form');
  await page.getByRole('button', { name: 'Create the draft election' }).click();
  await page.waitForURL(/\/organise\/elections\/[0-9a-f-]{36}$/);
  const electionId = /elections\/([0-9a-f-]{36})$/.exec(page.url())![1]!;

  await page.getByRole('link', { name: 'Ballot codes' }).click();
  await page.getByLabel('How many codes', { exact: true }).fill('5');
  await page.getByLabel('A list on screen').check();
  await page.getByRole('button', { name: 'Issue the codes' }).click();
  const codes = await page.locator('td.code').allInnerTexts();
  expect(codes).toHaveLength(5);

  await page.goto(`${server.url}/organise/elections/${electionId}`);
  await page.getByRole('link', { name: 'Open the election…' }).click();
  await page.getByRole('button', { name: 'Open now' }).click();
  await page.waitForURL(`${server.url}/organise/elections/${electionId}`);

  const receipts: string[] = [];
  for (const [i, ticks] of BALLOTS.entries()) receipts.push(await vote(codes[i]!, electionId, ticks));

  await page.reload();
  await audited(page, 'organise-dashboard');
  await page.getByRole('link', { name: 'Close voting now…' }).click();
  await page.getByRole('button', { name: 'Close voting now' }).click();
  await page.getByRole('link', { name: 'Unlock the tally' }).click();
  await page.getByLabel('Tally passphrase', { exact: true }).fill(PASSPHRASE);
  await page.getByRole('button', { name: 'Unlock and draw the result' }).click();
  // The draw runs off the request; its page refreshes itself (no script) until the whole minute.
  await page.getByRole('heading', { name: 'Drawing the result…' }).waitFor();
  await audited(page, 'organise-drawing');
  await page.getByRole('heading', { name: 'The drawn result' }).waitFor({ timeout: 150_000 });
  await page.getByRole('link', { name: 'Publish the result…' }).first().click();
  await page.getByLabel('I understand that publishing is final.').check();
  await page.getByRole('button', { name: 'Publish the result' }).click();
  await page.waitForURL(`${server.url}/organise/elections/${electionId}`);
  await context.close();

  // The public result, read by someone who is not signed in.
  const reader = await browser.newContext({ viewport: DESKTOP });
  const result = await reader.newPage();
  await result.goto(`${server.url}/results/${electionId}`);
  const winners = await result.locator('.announce-name').allInnerTexts();
  expect(winners).toHaveLength(1);
  expect(OPTIONS).toContain(winners[0]);
  expect(await result.locator('.meaning p').first().innerText()).toContain(
    `${winners[0]} was drawn by a lottery weighted toward the options more members approved.`,
  );
  await result.getByLabel('Receipt', { exact: true }).fill(receipts[2]!);
  await result.getByRole('button', { name: 'Check receipt' }).click();
  expect(await result.getByRole('status').filter({ hasText: 'This receipt is among the ballots counted.' }).count()).toBe(1);
  await audited(result, 'lifecycle-result');
  await reader.close();
}, 300_000);
