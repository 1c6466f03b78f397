import { afterAll, beforeAll, expect, it } from 'vitest';
import fs from 'node:fs';
import type { Browser } from 'playwright-core';
import { launchChromium, screenshot } from './browser.ts';
import { startServer, type RunningServer } from '../test/helpers/server.ts';

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

it('loads the home page in Chromium and saves a screenshot', async () => {
  const page = await browser.newPage();
  const response = await page.goto(server.url);
  expect(response?.status()).toBe(200);
  await expect(page.title()).resolves.toContain('Veiltally');
  expect(await page.locator('h1').innerText()).toBe('Private approval votes');
  const file = await screenshot(page, 'home');
  expect(fs.statSync(file).size).toBeGreaterThan(1000);
  await page.close();
});
