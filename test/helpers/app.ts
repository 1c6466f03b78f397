import pino from 'pino';
import type { Express } from 'express';
import { loadConfig } from '../../src/config.ts';
import { createApp } from '../../src/web/app.ts';
import type { UseCaseContext } from '../../src/elections/context.ts';

export function testApp(ctx: UseCaseContext, env: Record<string, string> = {}): Express {
  const config = loadConfig({ VEILTALLY_DATA_DIR: '/nonexistent-test-dir', ...env });
  return createApp({ config, ctx, logger: pino({ level: 'silent' }), sessionSecret: 'test-session-secret-0123456789abcdef' });
}
