import { expect, it } from 'vitest';
import { screenshot } from './browser.ts';
import { focusRing, tabTo } from './audit.ts';
import { useMemberBrowser } from './memberServer.ts';
import { openElectionFixture, openStoredBallots } from '../test/helpers/fixtures.ts';

/** A member who uses only the keyboard (Tab, Space, Enter and typing) can vote from start to receipt. */
const env = useMemberBrowser();

it('votes with Tab, Space and Enter only, with a visible focus ring, and seals exactly the ticks made', async () => {
  const f = await openElectionFixture(env.server.ctx, env.server.organiserId, {
    title: 'Tenants’ repairs fund',
    options: [
      { label: 'Fix the lift', description: 'The lift has been out of order twice this winter.' },
      { label: 'Repaint the stairwell' },
      { label: 'New bike shed' },
      { label: 'Brighter lights in the car park' },
    ],
  });
  const context = await env.browser.newContext();
  const page = await context.newPage();
  await page.goto(`${env.server.url}/vote/${f.id}`);

  await tabTo(page, { id: 'code' });
  expect(await focusRing(page)).toBe('solid 3px');
  await page.keyboard.type(f.codes[0]!);
  await Promise.all([page.waitForURL('**/ballot'), page.keyboard.press('Enter')]);

  await tabTo(page, { id: 'option-1' });
  expect(await focusRing(page)).toBe('solid 3px');
  await page.keyboard.press('Space');
  await tabTo(page, { id: 'option-3' });
  await page.keyboard.press('Space');
  await screenshot(page, 'keyboard-ballot-focus');
  await tabTo(page, { text: 'Read back my choices' });
  await Promise.all([page.waitForURL('**/confirm'), page.keyboard.press('Enter')]);

  expect(await page.locator('ul.ticked-list li').allInnerTexts()).toEqual(['Repaint the stairwell', 'Brighter lights in the car park']);
  await tabTo(page, { text: 'Cast my ballot' });
  expect(await focusRing(page)).toBe('solid 3px');
  await Promise.all([page.waitForURL('**/receipt'), page.keyboard.press('Enter')]);

  expect(await page.getByRole('heading', { name: 'Your ballot has been received' }).isVisible()).toBe(true);
  expect(await openStoredBallots(env.server.ctx, f.id)).toEqual([[1, 3]]);
  await context.close();
});
