import { describe, expect, it } from 'vitest';
import type { BrowserContext, Page } from 'playwright-core';
import { screenshot } from './browser.ts';
import { DESKTOP, PHONE, focusRing, seriousViolations, tabTo } from './audit.ts';
import { useMemberBrowser } from './memberServer.ts';
import { FIXTURE_PASSWORD, castAll, createDraft, openElectionFixture, tallyFixture, type ElectionFixture } from '../test/helpers/fixtures.ts';

/**
 * The pages whose look, result layout and guidance this project restyled, in a real Chromium:
 * each passes axe-core with no serious or critical finding on a desktop and a phone viewport,
 * and a screenshot of each is kept in e2e/artifacts/look-*.png for a person to look at.
 * The published result page also prints on one A4 sheet.
 */
const env = useMemberBrowser();
const SIZES = [
  ['desktop', DESKTOP],
  ['phone', PHONE],
] as const;

const BOAT = {
  title: 'Name the new coxed four',
  description: 'The club has a new boat.\nTick every name you would be happy to row under.',
  epsilon: '1',
  options: [
    { label: 'Heron', description: 'A grey wading bird, patient on the riverbank.' },
    { label: 'Kingfisher', description: 'Small, quick and bright blue.' },
    { label: 'Otter' },
    { label: 'Swift', description: 'Never lands, or so the story goes.' },
  ],
};

const REPAIRS = {
  title: 'Which repairs to fund this year',
  seats: 3,
  epsilon: '1.5',
  options: ['Fix the lift', 'Repaint the stairwell', 'New bike shed', 'Brighter car park lights', 'Mend the roof', 'Replace the entry phone'].map(
    (label) => ({ label }),
  ),
};

async function newPage(viewport: { width: number; height: number }): Promise<{ context: BrowserContext; page: Page }> {
  const context = await env.browser.newContext({ viewport, isMobile: viewport.width < 600, hasTouch: viewport.width < 600 });
  return { context, page: await context.newPage() };
}

/** axe and a screenshot at both sizes, for the page as it stands. */
async function audit(page: Page, name: string): Promise<void> {
  for (const [size, viewport] of SIZES) {
    await page.setViewportSize(viewport);
    expect(await seriousViolations(page), `${name} (${size})`).toEqual([]);
    await screenshot(page, `look-${name}-${size}`);
  }
  await page.setViewportSize(DESKTOP);
}

async function signIn(page: Page): Promise<void> {
  await page.goto(`${env.server.url}/organise/sign-in`);
  await page.locator('#email').fill('organiser@rowing.example');
  await page.locator('#password').fill(FIXTURE_PASSWORD);
  await page.locator('form.stack button[type=submit]').click();
  await page.waitForURL(`${env.server.url}/organise`);
}

describe('the look, in Chromium', () => {
  let boat: ElectionFixture;
  let repairs: ElectionFixture;

  it('home, sign-in and the organiser pages', async () => {
    const { context, page } = await newPage(DESKTOP);
    await page.goto(`${env.server.url}/`);
    await audit(page, 'home');
    await page.goto(`${env.server.url}/organise/sign-in`);
    await audit(page, 'sign-in');
    await signIn(page);
    boat = await openElectionFixture(env.server.ctx, env.server.organiserId, { ...BOAT, codes: 8 });
    repairs = await openElectionFixture(env.server.ctx, env.server.organiserId, { ...REPAIRS, codes: 12 });
    const draft = await createDraft(env.server.ctx, env.server.organiserId, { title: 'Where to hold the summer regatta dinner' });
    await page.goto(`${env.server.url}/organise`);
    await audit(page, 'elections');
    await page.goto(`${env.server.url}/organise/elections/new`);
    await audit(page, 'form-new');
    await page.getByRole('button', { name: 'Create the draft election' }).click();
    await expect(page.getByRole('alert').first().innerText()).resolves.toMatch(/answers need another look/);
    // Each field in trouble says so beside itself and is tied to its message.
    await expect(page.locator('#title').getAttribute('aria-invalid')).resolves.toBe('true');
    await expect(page.locator('#title').getAttribute('aria-describedby')).resolves.toContain('title-error');
    await audit(page, 'form-errors');
    // The guidance in numbers, for 12 voters, 4 options and ε = 0.5; the page comes back at the guidance.
    await page.getByLabel('Title', { exact: true }).fill('Name the new coxed four');
    for (const [i, label] of ['Heron', 'Kingfisher', 'Otter', 'Swift'].entries())
      await page.getByLabel(`Option ${i + 1} label`, { exact: true }).fill(label);
    await page.getByLabel('Privacy level ε', { exact: true }).fill('0.5');
    await page.getByLabel('Expected number of voters (optional)', { exact: true }).fill('12');
    await page.getByLabel('Passphrase', { exact: true }).fill('rowing club boat naming');
    await page.getByRole('button', { name: 'Update the guidance for these settings' }).click();
    await page.waitForURL(/\/organise\/elections\/new\/guidance#guidance$/);
    await expect(page.getByText('If all 12 voters approve one option and nobody approves any other').isVisible()).resolves.toBe(true);
    await expect(page.getByLabel('Passphrase', { exact: true }).inputValue()).resolves.toBe('rowing club boat naming');
    await audit(page, 'form-guidance');
    await page.getByLabel('Privacy level ε', { exact: true }).fill('4');
    await page.getByRole('button', { name: 'Update the guidance for these settings' }).click();
    await expect(page.getByRole('heading', { name: 'Weak privacy protection' }).isVisible()).resolves.toBe(true);
    await audit(page, 'form-weak-protection');
    await page.goto(`${env.server.url}/organise/elections/${draft.id}`);
    await audit(page, 'dashboard-draft');
    await page.goto(`${env.server.url}/organise/elections/${draft.id}/open`);
    await audit(page, 'open');
    await page.goto(`${env.server.url}/organise/elections/${boat.id}`);
    await audit(page, 'dashboard-open');
    await page.goto(`${env.server.url}/organise/elections/${boat.id}/close`);
    await audit(page, 'close');
    // Keyboard users see where they are: the stylesheet's ring on a button (WCAG 2.2 SC 2.4.7).
    await tabTo(page, { text: 'Close voting now' });
    await expect(focusRing(page)).resolves.toBe('solid 3px');
    await context.close();
  });

  it('the member’s steps and a code problem', async () => {
    const { context, page } = await newPage(DESKTOP);
    await page.goto(`${env.server.url}/vote/${boat.id}`);
    await audit(page, 'vote-code');
    const code = boat.codes[0]!;
    await page.locator('#code').fill(code.slice(0, -1) + (code.endsWith('0') ? '1' : '0'));
    await page.locator('#code').press('Enter');
    await audit(page, 'vote-code-problem');
    await expect(page.locator('#code').getAttribute('aria-invalid')).resolves.toBe('true');
    await page.locator('#code').fill(code);
    await page.getByRole('button', { name: 'Show my ballot' }).click();
    await page.getByLabel('Heron', { exact: true }).check();
    await page.getByLabel('Swift', { exact: true }).check();
    await expect(page.locator('.track [aria-current=step]').innerText()).resolves.toBe('Choose');
    await audit(page, 'vote-ballot');
    await page.getByRole('button', { name: 'Read back my choices' }).click();
    await expect(page.getByRole('heading', { name: 'Read back your ballot' }).isVisible()).resolves.toBe(true);
    await audit(page, 'vote-confirm');
    await page.getByRole('button', { name: /^Cast my/ }).click();
    await audit(page, 'vote-receipt');
    await context.close();
  });

  it('result pages: pending, one winner, three seats; printable on one page', async () => {
    await castAll(env.server.ctx, boat, [[0, 1], [0], [0, 3], [1], [0, 2]], 1);
    await castAll(env.server.ctx, repairs, [[0, 1], [0, 4], [1, 4, 5], [0, 2], [3], [0, 1, 4]], 0);
    const { context, page } = await newPage(DESKTOP);
    await page.goto(`${env.server.url}/results/${boat.id}`);
    await audit(page, 'result-pending');
    env.server.clock.advance(8 * 24 * 3600_000);
    await signIn(page);
    await page.goto(`${env.server.url}/organise/elections/${boat.id}/tally`);
    await expect(page.getByText('so these figures are for the 20 voters you expected').isVisible()).resolves.toBe(true);
    await audit(page, 'tally');
    await tallyFixture(env.server.ctx, boat, true);
    await tallyFixture(env.server.ctx, repairs, true);
    await page.goto(`${env.server.url}/results/${boat.id}`);
    await audit(page, 'result-one-seat');
    await page.goto(`${env.server.url}/results/${repairs.id}`);
    await expect(page.locator('.announce-name').count()).resolves.toBe(3);
    await expect(page.getByText('This order is not a ranking').isVisible()).resolves.toBe(true);
    await page.getByText('The mathematics behind the draw').click();
    await expect(page.getByRole('img', { name: /Lead needed against the chance/ }).isVisible()).resolves.toBe(true);
    await audit(page, 'result-three-seats');
    await page.emulateMedia({ media: 'print' });
    await screenshot(page, 'look-result-three-seats-print');
    const pdf = await page.pdf({ format: 'A4' });
    // Each page of a PDF is one "/Type /Page" object (ISO 32000-1 §7.7.3.3); "/Type /Pages" is the tree node.
    expect(pdf.toString('latin1').match(/\/Type\s*\/Page(?!s)/g)?.length).toBe(1);
    await context.close();
  });
});
