import { describe, expect, it } from 'vitest';
import type { BrowserContext, Page } from 'playwright-core';
import { screenshot } from './browser.ts';
import { DESKTOP, PHONE, seriousViolations, watchForScript } from './audit.ts';
import { useMemberBrowser } from './memberServer.ts';
import { closeElection } from '../src/elections/closeElection.ts';
import { loadConfig } from '../src/config.ts';
import { normaliseCode } from '../src/custody/index.ts';
import { FIXTURE_PASSWORD, castAll, createDraft, openElectionFixture, tallyFixture } from '../test/helpers/fixtures.ts';
import { decodeQr } from '../test/helpers/qr.ts';

/**
 * Issue 11 in Chromium: true times on the public timeline (a scheduled opening, an early close),
 * the QR code on printed slips decoding to the ballot address and never the code, and the
 * organiser basics (move the closing time, correct the description, share, delete a draft,
 * change one's password). axe on each page; screenshots in e2e/artifacts/.
 */
const env = useMemberBrowser();

async function newPage(viewport: { width: number; height: number } = DESKTOP): Promise<{ context: BrowserContext; page: Page }> {
  const context = await env.browser.newContext({ viewport, isMobile: viewport.width < 600, hasTouch: viewport.width < 600 });
  return { context, page: await context.newPage() };
}

async function checkPage(page: Page, name: string): Promise<void> {
  expect(await seriousViolations(page), name).toEqual([]);
  await screenshot(page, name);
}

const timelineOf = (page: Page) =>
  page.locator('ol.timeline li').evaluateAll((items) =>
    items.map((li) => {
      const el = li as unknown as { querySelector(s: string): { getAttribute(n: string): string; textContent: string } };
      return [el.querySelector('.timeline-label').textContent, el.querySelector('time').getAttribute('datetime')];
    }),
  );

async function signIn(page: Page, password = FIXTURE_PASSWORD): Promise<void> {
  await page.goto(`${env.server.url}/organise/sign-in`);
  await page.getByLabel('Email address').fill('organiser@rowing.example');
  await page.getByLabel('Password', { exact: true }).fill(password);
  await page.getByRole('button', { name: /sign in/i }).click();
  await page.waitForURL(/\/organise$/);
}

describe('the public timeline tells the real times', () => {
  it('a scheduled opening at 12:00 shows 12:00, and an early close shows the moment of closing', async () => {
    const { ctx, clock, organiserId } = env.server;
    clock.set('2026-06-01T09:00:00Z'); // 10:00 in London; the schedule is set now for 13:00 London
    const opensAt = new Date('2026-06-01T12:00:00Z');
    const f = await openElectionFixture(ctx, organiserId, { title: 'Regatta crew colours', opensAt, closesAt: new Date('2026-06-03T17:00:00Z') });
    clock.set('2026-06-01T15:00:00Z');
    await castAll(ctx, f, [[0], [1]]);
    clock.set('2026-06-02T10:15:00Z');
    await closeElection(ctx, { electionId: f.id, organiserId });
    await tallyFixture(ctx, f, false);
    clock.advance(2 * 60_000); // past the draw's visible-from minute
    const { context, page } = await newPage();
    await page.goto(`${env.server.url}/results/${f.id}`);
    const entries = await timelineOf(page);
    expect(entries).toContainEqual(['Voting opened', opensAt.toISOString()]);
    expect(entries).toContainEqual(['Voting closed early', '2026-06-02T10:15:00.000Z']);
    expect(entries.find(([l]) => l === 'Voting opened')![1]).not.toBe('2026-06-01T09:00:00.000Z');
    await expect(page.locator('ol.timeline').innerText()).resolves.toContain('13:00');
    await checkPage(page, 'flows-timeline-desktop');
    await context.close();
    clock.set('2026-06-01T09:00:00Z');
  });
});

describe('printed slips', () => {
  it('carry a QR code that a reader decodes to the ballot address, never the code, and a short address that works', async () => {
    const { ctx, organiserId } = env.server;
    const f = await createDraft(ctx, organiserId, { title: 'Boathouse repairs', codes: 1 });
    const { context, page } = await newPage();
    const script = watchForScript(page);
    await signIn(page);
    await page.goto(`${env.server.url}/organise/elections/${f.id}/codes`);
    await page.getByLabel('How many codes', { exact: true }).fill('2');
    await page.getByLabel(/printable page of slips/).check();
    await page.getByRole('button', { name: 'Issue the codes' }).click();
    await expect(page.locator('li.slip').count()).resolves.toBe(2);
    await checkPage(page, 'flows-slips-desktop');
    const codes = await page.locator('.slip-code').allInnerTexts();
    // Decode what the browser drew: a screenshot of the first slip's QR image, read by jsQR.
    const shot = await page.locator('img.slip-qr').first().screenshot();
    const decoded = decodeQr(shot);
    // The site's configured public address (the test server listens elsewhere), then the ballot path.
    const publicUrl = loadConfig({ VEILTALLY_DATA_DIR: '/nonexistent-test-dir' }).publicUrl;
    expect(decoded).toBe(`${publicUrl}/vote/${f.id}`);
    for (const c of codes) {
      expect(decoded).not.toContain(c);
      expect(decoded.toUpperCase()).not.toContain(normaliseCode(c));
    }
    // The slips page ran no script and loaded every image (the QR codes are data: images the CSP allows).
    expect(script).toEqual({ dialogs: [], errors: [] });
    // The short address printed on the slip leads to the ballot page (a draft: "not open yet").
    const short = (await page.locator('.slip-url').first().innerText()).trim();
    expect(short).toMatch(new RegExp(`^${publicUrl}/v/[0-9a-z]{8}$`));
    const answer = await page.goto(short.replace(publicUrl, env.server.url));
    expect(answer!.url()).toBe(`${env.server.url}/vote/${f.id}`);
    await expect(page.getByRole('heading', { name: 'This ballot is not open yet' }).isVisible()).resolves.toBe(true);
    expect(await page.content()).not.toContain('Boathouse repairs');
    await context.close();
  });
});

describe('members never meet a dead end', () => {
  it('the home page finds a ballot from a typed code, on a phone', async () => {
    const { ctx, organiserId } = env.server;
    const f = await openElectionFixture(ctx, organiserId, { title: 'Club barbecue date' });
    const { context, page } = await newPage(PHONE);
    await page.goto(`${env.server.url}/`);
    await checkPage(page, 'flows-home-phone');
    await page.getByLabel('Ballot code or ballot link').fill(f.codes[0]!.toLowerCase().replace(/-/g, ' '));
    await page.getByRole('button', { name: 'Find my ballot' }).click();
    await expect(page.getByRole('heading', { name: 'Club barbecue date' }).isVisible()).resolves.toBe(true);
    // The same hand-over as the ballot's own code step: a GET of its ballot page; the code is in no address.
    expect(page.url()).toBe(`${env.server.url}/vote/${f.id}/ballot`);
    await expect(page.getByText('Your code belongs to this ballot').isVisible()).resolves.toBe(true);
    await checkPage(page, 'flows-home-found-phone');
    await context.close();
  });
});

describe('organiser basics', () => {
  it('moves the closing time later, corrects the description during voting, shares, and both show where they should', async () => {
    const { ctx, organiserId } = env.server;
    const f = await openElectionFixture(ctx, organiserId, { title: 'Winter training nights', closesAt: new Date('2026-06-03T17:00:00Z') });
    await (
      await import('../src/accounts/addOrganiser.ts')
    ).addOrganiser(ctx, { organiserId, email: 'coach@rowing.example', password: 'coach password long enough' });
    const { context, page } = await newPage();
    await signIn(page);
    await page.goto(`${env.server.url}/organise/elections/${f.id}`);
    await page.getByRole('link', { name: 'Move the closing time later' }).click();
    await checkPage(page, 'flows-closing-desktop');
    await page.getByLabel('New closing time').fill('2026-06-05T18:00');
    await page.getByRole('button', { name: 'Move the closing time' }).click();
    await expect(page.locator('.settings').innerText()).resolves.toContain('5 Jun 2026, 18:00');
    await page.getByRole('link', { name: 'Correct the wording' }).click();
    await checkPage(page, 'flows-wording-desktop');
    await page.getByLabel('Description (optional)').fill('Tuesdays and Thursdays, from 19:00.');
    await page.getByRole('button', { name: 'Save the corrections' }).click();
    await page.getByRole('link', { name: 'Share with another organiser' }).click();
    await page.getByLabel('Their email').fill('coach@rowing.example');
    await page.getByRole('button', { name: 'Share' }).click();
    await expect(page.getByText('Shared. They now see this election').isVisible()).resolves.toBe(true);
    await checkPage(page, 'flows-sharing-desktop');
    const pub = await context.newPage();
    await pub.goto(`${env.server.url}/results/${f.id}`);
    const labels = (await timelineOf(pub)).map(([l]) => l);
    expect(labels.some((l) => l?.startsWith('Closing time extended to'))).toBe(true);
    expect(labels).toContain('Description corrected');
    await context.close();
  });

  it('makes a new draft from a closed election, saved at once from its form', async () => {
    const { ctx, clock, organiserId } = env.server;
    const f = await openElectionFixture(ctx, organiserId, { title: 'Spring regatta crews', closesAt: new Date(clock.now().getTime() + 3600_000) });
    await closeElection(ctx, { electionId: f.id, organiserId });
    const { context, page } = await newPage(PHONE);
    await signIn(page);
    await page.goto(`${env.server.url}/organise/elections/${f.id}`);
    await page.getByRole('link', { name: 'Make a new draft from this…' }).click();
    await checkPage(page, 'flows-copy-phone');
    await page.getByLabel('Passphrase', { exact: true }).fill('autumn regatta passphrase');
    await page.getByLabel('Passphrase again').fill('autumn regatta passphrase');
    await page.getByRole('button', { name: 'Make the new draft' }).click();
    await page.waitForURL(/\/edit\?copied=yes$/);
    await expect(page.getByText('This is a new draft, made from another election.').isVisible()).resolves.toBe(true);
    await expect(page.getByLabel('Title').inputValue()).resolves.toBe('Spring regatta crews (copy)');
    await checkPage(page, 'flows-copied-form-phone');
    await page.getByRole('button', { name: 'Save the draft' }).click();
    await page.waitForURL(/\/organise\/elections\/[0-9a-f-]{36}$/);
    await expect(page.getByRole('heading', { level: 1 }).textContent()).resolves.toBe('Spring regatta crews (copy)');
    await context.close();
  });

  it('deletes a draft and changes the organiser’s own password', async () => {
    const { ctx, organiserId } = env.server;
    const f = await createDraft(ctx, organiserId, { title: 'Draft to bin' });
    const { context, page } = await newPage(PHONE);
    await signIn(page);
    await page.goto(`${env.server.url}/organise/elections/${f.id}`);
    await page.getByRole('link', { name: 'Delete the draft…' }).click();
    await checkPage(page, 'flows-delete-phone');
    await page.getByRole('button', { name: 'Delete the draft' }).click();
    await expect(page.getByText('The draft has been deleted').isVisible()).resolves.toBe(true);
    expect(await page.content()).not.toContain('Draft to bin');
    await page.getByRole('link', { name: 'Your account' }).click();
    await page.getByLabel('Current password').fill(FIXTURE_PASSWORD);
    await page.getByLabel('New password', { exact: true }).fill('a new password for the club');
    await page.getByLabel('New password again').fill('a new password for the club');
    await page.getByRole('button', { name: 'Change my password' }).click();
    await expect(page.getByText('Password changed').isVisible()).resolves.toBe(true);
    await checkPage(page, 'flows-account-phone');
    await context.close();
    const again = await newPage();
    await signIn(again.page, 'a new password for the club');
    await again.context.close();
  });
});
