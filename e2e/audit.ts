import { AxeBuilder } from '@axe-core/playwright';
import type { ConsoleMessage, Dialog, Page } from 'playwright-core';

/** Serious and critical axe-core findings (WCAG 2.x A/AA and best practice), one line each. */
export async function seriousViolations(page: Page): Promise<string[]> {
  const result = await new AxeBuilder({ page }).analyze();
  return result.violations
    .filter((v) => v.impact === 'serious' || v.impact === 'critical')
    .map((v) => `${v.impact} ${v.id}: ${v.help} at ${v.nodes.map((n) => n.target.join(' ')).join(', ')}`);
}

/** Collects what would betray injected markup running: dialogs, console errors, page errors. */
export function watchForScript(page: Page): { dialogs: string[]; errors: string[] } {
  const seen = { dialogs: [] as string[], errors: [] as string[] };
  page.on('dialog', (d: Dialog) => {
    seen.dialogs.push(`${d.type()}: ${d.message()}`);
    void d.dismiss();
  });
  page.on('console', (m: ConsoleMessage) => {
    // The browser's own favicon probe is not page content; anything else (a blocked inline script, a broken <img>) is.
    if (m.type() === 'error' && !m.location().url.endsWith('/favicon.ico')) seen.errors.push(`${m.text()} (${m.location().url})`);
  });
  page.on('pageerror', (e) => seen.errors.push(e.message));
  return seen;
}

export const DESKTOP = { width: 1280, height: 900 } as const;
export const PHONE = { width: 390, height: 844 } as const;

/** The little of the browser's window these helpers read (the project compiles without the DOM library). */
interface BrowserWindow {
  document: { activeElement: { id: string; innerText: string } | null };
  getComputedStyle(el: unknown): { outlineStyle: string; outlineWidth: string };
}

/** Presses Tab until the focused element matches, as a keyboard user would; fails after `max` presses. */
export async function tabTo(page: Page, wanted: { id?: string; text?: string }, max = 40): Promise<void> {
  for (let i = 0; i < max; i++) {
    await page.keyboard.press('Tab');
    const here = await page.evaluate(() => {
      const el = (globalThis as unknown as BrowserWindow).document.activeElement;
      return { id: el?.id ?? '', text: (el?.innerText ?? '').trim() };
    });
    if ((wanted.id === undefined || here.id === wanted.id) && (wanted.text === undefined || here.text === wanted.text)) return;
  }
  throw new Error(`Tab never reached ${JSON.stringify(wanted)}`);
}

/** The focus ring the stylesheet draws for keyboard users (WCAG 2.2 SC 2.4.7 Focus Visible). */
export async function focusRing(page: Page): Promise<string> {
  return page.evaluate(() => {
    const w = globalThis as unknown as BrowserWindow;
    const s = w.getComputedStyle(w.document.activeElement);
    return `${s.outlineStyle} ${s.outlineWidth}`;
  });
}
