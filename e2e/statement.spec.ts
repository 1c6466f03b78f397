import { expect, it } from 'vitest';
import { seriousViolations } from './audit.ts';
import { useMemberBrowser } from './memberServer.ts';
import { castAll, openElectionFixture, tallyFixture } from '../test/helpers/fixtures.ts';

const env = useMemberBrowser();

it('the key, verify and ledger pages and a result with its statement links have no serious or critical axe finding', async () => {
  const { server, browser } = env;
  const f = await openElectionFixture(server.ctx, server.organiserId, { codes: 3, memberGroup: 'Rowing club members' });
  await castAll(server.ctx, f, [[0], [1, 2], [0, 3]]);
  server.clock.advance(8 * 24 * 3600_000);
  await tallyFixture(server.ctx, f, true);
  const statement = (await (await fetch(`${server.url}/results/${f.id}/statement.json`)).json()) as { statement: { ledger: { groupId: string } } };
  const context = await browser.newContext();
  const page = await context.newPage();
  const pages = ['/keys', '/verify', `/groups/${statement.statement.ledger.groupId}/ledger`, `/results/${f.id}`];
  const findings: string[] = [];
  for (const path of pages) {
    const res = await page.goto(server.url + path);
    expect(res?.status(), path).toBe(200);
    findings.push(...(await seriousViolations(page)).map((v) => `${path}: ${v}`));
  }
  expect(findings).toEqual([]);
  await context.close();
});
