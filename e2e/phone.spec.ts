import { describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { screenshot } from './browser.ts';
import { DESKTOP, seriousViolations } from './audit.ts';
import { useMemberBrowser } from './memberServer.ts';
import { FIXTURE_PASSWORD, castAll, createDraft, openElectionFixture, tallyFixture, type ElectionFixture } from '../test/helpers/fixtures.ts';

/**
 * At a phone's width (390 CSS pixels) no page scrolls sideways as a whole: a wide table scrolls
 * inside its own box instead. Measured as the document's scrollWidth against the viewport's
 * width (CSSOM View, scrollWidth), on the pages whose tables overflowed: the signing keys, the
 * organisers, a group's privacy ledger, "Choosing ε" and the ballot codes. And the ballot link's
 * code field is on the first screen, at 390 × 700 and on a desktop; the result and its minutes print on one A4 sheet.
 */
const env = useMemberBrowser();
const NARROW = { width: 390, height: 700 } as const;

/** The little of the browser's window this spec reads (the project compiles without the DOM library). */
interface Box {
  tagName: string;
  className: string;
  children: ArrayLike<Box>;
  scrollWidth: number;
  clientWidth: number;
  getBoundingClientRect(): { right: number };
  parentElement: Box | null;
  scrollLeft: number;
}
interface Doc {
  document: { documentElement: Box; body: Box };
  getComputedStyle(el: Box): { overflowX: string };
}

interface Overflow {
  scrollWidth: number;
  clientWidth: number;
  /** The outermost elements that stick out past the viewport and are not inside a scrolling box: what to fix. */
  culprits: string[];
}

async function overflow(page: Page): Promise<Overflow> {
  return page.evaluate(() => {
    const w = globalThis as unknown as Doc;
    const root = w.document.documentElement;
    const limit = root.clientWidth;
    const culprits: string[] = [];
    const walk = (el: Box): void => {
      for (const child of Array.from(el.children)) {
        if (child.getBoundingClientRect().right > limit + 0.5) {
          culprits.push(`${child.tagName.toLowerCase()}${child.className ? '.' + String(child.className).split(' ').join('.') : ''}`);
          continue;
        }
        // A box that scrolls on its own keeps its content from widening the page.
        if (w.getComputedStyle(child).overflowX === 'visible') walk(child);
      }
    };
    walk(w.document.body);
    return { scrollWidth: root.scrollWidth, clientWidth: limit, culprits: culprits.slice(0, 5) };
  });
}

async function signIn(page: Page): Promise<void> {
  await page.goto(`${env.server.url}/organise/sign-in`);
  await page.locator('#email').fill('organiser@rowing.example');
  await page.locator('#password').fill(FIXTURE_PASSWORD);
  await page.locator('form.stack button[type=submit]').click();
  await page.waitForURL(`${env.server.url}/organise`);
}

describe('phone widths, in Chromium', () => {
  let boat: ElectionFixture;

  it('the ballot link shows the code field on the first screen, on a phone and a desktop', async () => {
    boat = await openElectionFixture(env.server.ctx, env.server.organiserId, {
      description: 'The club has a new boat.\nTick every name you would be happy to row under, and say why at the next meeting.',
      codes: 6,
    });
    for (const viewport of [NARROW, DESKTOP]) {
      const context = await env.browser.newContext({ viewport, isMobile: viewport.width < 600, hasTouch: viewport.width < 600 });
      const page = await context.newPage();
      await page.goto(`${env.server.url}/vote/${boat.id}`);
      const field = await page.locator('#code').boundingBox();
      const button = await page.getByRole('button', { name: 'Show my ballot' }).boundingBox();
      expect(field, 'the code field is laid out').not.toBeNull();
      expect(field!.y + field!.height, `field bottom at ${viewport.width} px`).toBeLessThanOrEqual(viewport.height);
      expect(button!.y + button!.height, `button bottom at ${viewport.width} px`).toBeLessThanOrEqual(viewport.height);
      await screenshot(page, `phone-vote-code-${viewport.width}`);
      await context.close();
    }
  });

  it('no page-level horizontal overflow at 390 px: keys, organisers, ledger, Choosing ε, codes', async () => {
    await castAll(env.server.ctx, boat, [[0, 1], [0], [2]]);
    env.server.clock.advance(8 * 24 * 3600_000);
    await tallyFixture(env.server.ctx, boat, true);

    const context = await env.browser.newContext({ viewport: NARROW, isMobile: true, hasTouch: true });
    const page = await context.newPage();
    await page.goto(`${env.server.url}/results/${boat.id}`);
    const ledgerHref = await page.getByRole('link', { name: 'the group’s privacy ledger' }).getAttribute('href');
    expect(ledgerHref).toMatch(/^\/groups\/[0-9a-f-]{36}\/ledger$/);

    const measured: Record<string, Overflow> = {};
    const findings: string[] = [];
    const measure = async (name: string): Promise<void> => {
      measured[name] = await overflow(page);
      // The scrolling boxes are named regions a keyboard can reach (axe: scrollable-region-focusable).
      for (const v of await seriousViolations(page)) findings.push(`${name}: ${v}`);
      await screenshot(page, `phone-${name}`);
    };
    await measure('result');
    await page.goto(`${env.server.url}/results/${boat.id}/minutes`);
    await measure('minutes');
    for (const [name, path] of [
      ['keys', '/keys'],
      ['ledger', ledgerHref!],
      ['choosing-epsilon', '/help/choosing-epsilon?options=12&seats=3&epsilon=0.5'],
      ['how-drawn', '/help/how-the-result-is-drawn'],
      ['verify', '/verify'],
    ] as const) {
      await page.goto(`${env.server.url}${path}`);
      await measure(name);
    }
    await signIn(page);
    await page.goto(`${env.server.url}/organise/organisers`);
    await measure('organisers');
    const later = await createDraft(env.server.ctx, env.server.organiserId, { title: 'Where to hold the summer regatta dinner' });
    await page.goto(`${env.server.url}/organise/elections/${later.id}/codes`);
    await measure('codes');
    await page.locator('#count').fill('5');
    await page.locator('input[name=format][value=screen]').check();
    await page.getByRole('button', { name: 'Issue the codes' }).click();
    await page.waitForURL(/\/codes$/);
    await measure('codes-list');
    await context.close();

    const wide = Object.entries(measured)
      .filter(([, m]) => m.scrollWidth > m.clientWidth)
      .map(([name, m]) => `${name}: ${m.scrollWidth} px in ${m.clientWidth} (${m.culprits.join(', ')})`);
    expect(wide).toEqual([]);
    expect(findings).toEqual([]);
    expect(Object.keys(measured)).toHaveLength(10);
  });

  it('the result page and its minutes each print on one A4 sheet, the minutes led by the sentence to read aloud', async () => {
    const context = await env.browser.newContext({ viewport: DESKTOP });
    const page = await context.newPage();
    for (const [name, path] of [
      ['result', `/results/${boat.id}`],
      ['minutes', `/results/${boat.id}/minutes`],
    ] as const) {
      await page.goto(`${env.server.url}${path}`);
      await expect(page.locator('.read-aloud').innerText()).resolves.toMatch(/^In the vote “.+”, .+ was drawn as the winner, at random/);
      await page.emulateMedia({ media: 'print' });
      await screenshot(page, `print-${name}`);
      const pdf = await page.pdf({ format: 'A4' });
      // Each page of a PDF is one "/Type /Page" object (ISO 32000-1 §7.7.3.3); "/Type /Pages" is the tree node.
      expect(pdf.toString('latin1').match(/\/Type\s*\/Page(?!s)/g)?.length, name).toBe(1);
      await page.emulateMedia({ media: 'screen' });
    }
    await context.close();
  });
});
