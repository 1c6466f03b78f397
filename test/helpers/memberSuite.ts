import { afterAll, beforeAll, beforeEach } from 'vitest';
import request from 'supertest';
import type { Express } from 'express';
import type { UseCaseContext } from '../../src/elections/context.ts';
import type { Engine } from '../../src/db/knex.ts';
import { testApp } from './app.ts';
import { testClock, testContext, type TestClock } from './context.ts';
import { freshDatabase, type TestDatabase } from './databases.ts';
import { findElection } from '../../src/elections/electionRepo.ts';
import { publishResult } from '../../src/elections/publishResult.ts';
import type { PrivacyStatement } from '../../src/mechanism/index.ts';
import {
  castAll,
  createOrganiser,
  csrfFrom,
  formBody,
  openElectionFixture,
  tallyFixture,
  type ElectionFixture,
  type FixtureOptions,
} from './fixtures.ts';
import { CookieJar, type Answer, type MemberHttp } from './memberWalk.ts';

export const SUITE_START = '2026-06-01T09:00:00Z';
export const DAY = 24 * 3600_000;
export type Agent = ReturnType<typeof request.agent>;

export interface MemberSuite {
  readonly ctx: UseCaseContext;
  readonly app: Express;
  readonly organiserId: string;
  readonly clock: TestClock;
  /** A member's browser: a cookie jar that has loaded the code entry page, and its CSRF token. */
  begin(f: ElectionFixture): Promise<{ agent: Agent; csrf: string; html: string }>;
  post(agent: Agent, path: string, fields: Record<string, string | string[] | undefined>): ReturnType<Agent['post']>;
  /** A fresh member's browser (its own cookie jar) for the walk in memberWalk.ts, and its agent. */
  browser(): MemberHttp & { agent: Agent; jar: CookieJar };
  /** Opens, casts these ballots (option positions), moves past the close, tallies and (by default) publishes. */
  decided(ballots: number[][], o?: FixtureOptions, publish?: boolean): Promise<Decided>;
}

export interface Decided {
  f: ElectionFixture;
  receipts: string[];
  winners: string[];
  statement: PrivacyStatement;
}

/**
 * One fresh database and app per describe block (call inside describe.each(engines)); the
 * clock is reset to SUITE_START before each test so tests can move it across opening and closing.
 */
export function useMemberSuite(engine: Engine): MemberSuite {
  let db: TestDatabase;
  const clock = testClock(SUITE_START);
  const state = {} as { ctx: UseCaseContext; app: Express; organiserId: string };
  beforeAll(async () => {
    db = await freshDatabase(engine);
    state.ctx = testContext(db, { now: clock.now });
    state.app = testApp(state.ctx);
    state.organiserId = await createOrganiser(state.ctx);
  });
  afterAll(async () => {
    await db?.dispose();
  });
  beforeEach(() => clock.set(SUITE_START));
  return {
    get ctx() {
      return state.ctx;
    },
    get app() {
      return state.app;
    },
    get organiserId() {
      return state.organiserId;
    },
    clock,
    async begin(f) {
      const agent = request.agent(state.app);
      const res = await agent.get(`/vote/${f.id}`).expect(200);
      return { agent, csrf: csrfFrom(res.text), html: res.text };
    },
    post: (agent, path, fields) => agent.post(path).type('form').send(formBody(fields)),
    browser: () => agentMember(request.agent(state.app)),
    async decided(ballots, o = {}, publish = true) {
      const f = await openElectionFixture(state.ctx, state.organiserId, { codes: Math.max(ballots.length, 1), ...o });
      const receipts = await castAll(state.ctx, f, ballots);
      clock.advance(8 * DAY);
      const winners = await tallyFixture(state.ctx, f, false);
      // The draw is shown from the whole minute at least a minute after queueing.
      clock.advance(2 * 60_000);
      if (publish) await publishResult(state.ctx, { electionId: f.id, organiserId: f.organiserId });
      const e = await findElection(state.ctx.knex, f.id);
      return { f, receipts, winners, statement: (e!.result as { statement: PrivacyStatement }).statement };
    },
  };
}

/**
 * A supertest agent as a MemberHttp: the agent's jar keeps the step and receipt cookies by path;
 * `jar` mirrors them, so a test can replay a request as this browser without the agent seeing the answer.
 */
export function agentMember(agent: Agent): MemberHttp & { agent: Agent; jar: CookieJar } {
  const jar = new CookieJar();
  const answer = (r: request.Response): Answer => {
    const setCookies = [(r.headers['set-cookie'] as unknown as string[] | undefined) ?? []].flat();
    jar.take(setCookies);
    return { status: r.status, location: r.headers.location as string | undefined, text: r.text, setCookies };
  };
  return {
    agent,
    jar,
    get: async (path) => answer(await agent.get(path)),
    post: async (path, fields) =>
      answer(
        await agent
          .post(path)
          .type('form')
          .send(new URLSearchParams(fields.map(([k, v]): [string, string] => [k, v])).toString()),
      ),
  };
}
