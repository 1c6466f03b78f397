import type { Server } from 'node:http';
import { afterAll, beforeAll } from 'vitest';
import type { Browser } from 'playwright-core';
import { launchChromium } from './browser.ts';
import type { UseCaseContext } from '../src/elections/context.ts';
import { testApp } from '../test/helpers/app.ts';
import { testClock, testContext, type TestClock } from '../test/helpers/context.ts';
import { freshDatabase, type TestDatabase } from '../test/helpers/databases.ts';
import { createOrganiser } from '../test/helpers/fixtures.ts';

/**
 * The whole app in this process on in-memory PGlite, so a browser spec can set elections up
 * through the use-cases and move the clock across opening and closing times. The full
 * lifecycle spec uses the real server process instead and touches nothing but the UI.
 */
export interface MemberServer {
  url: string;
  ctx: UseCaseContext;
  clock: TestClock;
  organiserId: string;
  close(): Promise<void>;
}

export async function startMemberServer(start = '2026-06-01T09:00:00Z'): Promise<MemberServer> {
  const db: TestDatabase = await freshDatabase('pglite');
  const clock = testClock(start);
  const ctx = testContext(db, { now: clock.now });
  const organiserId = await createOrganiser(ctx);
  const app = testApp(ctx);
  const server: Server = await new Promise((resolve) => {
    const s = app.listen(0, '127.0.0.1', () => resolve(s));
  });
  const address = server.address();
  const port = typeof address === 'object' && address ? address.port : 0;
  return {
    url: `http://127.0.0.1:${port}`,
    ctx,
    clock,
    organiserId,
    close: async () => {
      server.closeAllConnections();
      await new Promise<void>((resolve) => server.close(() => resolve()));
      await db.dispose();
    },
  };
}

/** A member server and a Chromium for one spec file, started before its tests and closed after. */
export function useMemberBrowser(): { server: MemberServer; browser: Browser } {
  const env = {} as { server: MemberServer; browser: Browser };
  beforeAll(async () => {
    env.server = await startMemberServer();
    env.browser = await launchChromium();
  });
  afterAll(async () => {
    await env.browser?.close();
    await env.server?.close();
  });
  return env;
}
