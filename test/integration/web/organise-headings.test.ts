import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Agent } from 'supertest';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testApp } from '../../helpers/app.ts';
import { testClock } from '../../helpers/context.ts';
import { draftElection, electionForm, makeOrganiser, organiseContext, postForm, signedIn } from './organiseSupport.ts';

/** The heading levels of a page, in document order. */
const levels = (html: string): number[] => [...html.matchAll(/<h([1-6])\b/g)].map((m) => Number(m[1]));

/** WCAG 2.2 SC 1.3.1 (technique G141): one h1 first, and no level skipped on the way down. */
function skips(html: string): string[] {
  const found = levels(html);
  const problems: string[] = [];
  if (found[0] !== 1) problems.push(`first heading is h${found[0]}`);
  found.forEach((h, i) => {
    if (i > 0 && h > found[i - 1]! + 1) problems.push(`h${found[i - 1]} then h${h}`);
  });
  return problems;
}

describe.each(engines)('organiser pages: heading order [%s]', (engine) => {
  let db: TestDatabase;
  let agent: Agent;
  let id: string;
  beforeAll(async () => {
    db = await freshDatabase(engine);
    const ctx = organiseContext(db, testClock('2026-06-01T09:00:00Z'));
    const app = testApp(ctx);
    const me = await makeOrganiser(ctx, 'librarian@choir.example');
    agent = await signedIn(app, me.email);
    id = await draftElection(ctx, me.id);
  });
  afterAll(async () => {
    await db.dispose();
  });

  it('the skip check itself finds a skipped level', () => {
    expect(skips('<h1>a</h1><h3>b</h3>')).toEqual(['h1 then h3']);
    expect(skips('<h1>a</h1><h2>b</h2><h3>c</h3><h2>d</h2>')).toEqual([]);
  });

  it.each(['/organise', '/organise/organisers', '/organise/elections/new', 'dashboard', 'edit', 'codes', 'open'])('%s', async (page) => {
    const path = page.startsWith('/') ? page : page === 'dashboard' ? `/organise/elections/${id}` : `/organise/elections/${id}/${page}`;
    const res = await agent.get(path);
    expect(res.status).toBe(200);
    expect(skips(res.text)).toEqual([]);
  });

  it('the election form re-rendered with errors or fresh guidance', async () => {
    const bad = await postForm(agent, '/organise/elections/new', '/organise/elections/new', electionForm({ title: '' }));
    expect(bad.status).toBe(400);
    expect(skips(bad.text)).toEqual([]);
    const guidance = await postForm(agent, '/organise/elections/new', '/organise/elections/new/guidance', electionForm({ intent: 'guidance' }));
    expect(guidance.status).toBe(200);
    expect(skips(guidance.text)).toEqual([]);
  });
});
