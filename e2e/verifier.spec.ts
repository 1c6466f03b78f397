import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { screenshot, tempDir } from './browser.ts';
import { useMemberBrowser } from './memberServer.ts';
import { castAll, openElectionFixture, tallyFixture } from '../test/helpers/fixtures.ts';

/**
 * A member's check, as /verify describes it: save the statement, the key and the checker, then
 * open the checker from disk (file://, no server behind it) in Chromium and choose the files.
 * The genuine statement, pretty-printed as a browser shows it, passes; a changed winner does not.
 */
const env = useMemberBrowser();

async function fetchText(url: string): Promise<string> {
  const res = await fetch(url);
  expect(res.status, url).toBe(200);
  return res.text();
}

describe('the offline checker, opened from disk in Chromium', () => {
  it('passes the genuine statement (pretty-printed) and fails a tampered one', async () => {
    const boat = await openElectionFixture(env.server.ctx, env.server.organiserId, { codes: 4 });
    await castAll(env.server.ctx, boat, [[0, 1], [0], [2]]);
    env.server.clock.advance(8 * 24 * 3600_000);
    await tallyFixture(env.server.ctx, boat, true);

    const dir = tempDir('vt-offline-');
    const statement = JSON.parse(await fetchText(`${env.server.url}/results/${boat.id}/statement.json`)) as {
      statement: { keyId: string; released: { winners: string[] }; options: string[] };
    };
    const key = await fetchText(`${env.server.url}/keys/${statement.statement.keyId}.json`);
    const checker = path.join(dir, 'veiltally-verify.html');
    fs.writeFileSync(checker, await fetchText(`${env.server.url}/verify/veiltally-verify.html`));
    fs.writeFileSync(path.join(dir, 'statement.json'), JSON.stringify(statement, null, 2));
    fs.writeFileSync(path.join(dir, 'key.json'), key);
    const tampered = structuredClone(statement);
    tampered.statement.released.winners = [statement.statement.options.find((o) => !statement.statement.released.winners.includes(o))!];
    fs.writeFileSync(path.join(dir, 'tampered.json'), JSON.stringify(tampered, null, 2));

    // No network for the page at all: every request it tries is refused and counted.
    const context = await env.browser.newContext({ viewport: { width: 390, height: 844 } });
    const requests: string[] = [];
    await context.route(/^(?!file:)/, (route) => {
      requests.push(route.request().url());
      return route.abort();
    });
    const page = await context.newPage();
    await page.goto(`file://${checker}`);
    for (const [file, verdict] of [
      ['statement.json', 'All checks passed.'],
      ['tampered.json', 'The statement did NOT pass: see the lines marked ✗.'],
    ] as const) {
      await page.locator('#statement-file').setInputFiles(path.join(dir, file));
      await page.locator('#key-file').setInputFiles(path.join(dir, 'key.json'));
      await page.locator('#election').fill(boat.id);
      await page.getByRole('button', { name: 'Check' }).click();
      await expect(page.locator('#verdict').innerText()).resolves.toBe(verdict);
      await screenshot(page, `offline-check-${file.replace('.json', '')}`);
    }
    await expect(page.locator('#out').innerText()).resolves.toContain('signature does NOT match');
    expect(requests).toEqual([]);
    await context.close();
    fs.rmSync(dir, { recursive: true, force: true });
  });
});
