import type { Server } from 'node:http';
import { ConfigError, loadConfig } from './config.ts';
import { openConfiguredDatabase } from './db/configured.ts';
import { DataDirectoryLocked } from './db/dirLock.ts';
import { MigrationFailed, migrateLatest } from './db/migrate.ts';
import { liveContext } from './elections/context.ts';
import { keyDirectory } from './keyfiles/keyDirectory.ts';
import { createLogger } from './log.ts';
import { loadSecrets } from './secrets.ts';
import { checkSecretsAgree, SecretsDisagree } from './instanceCheck.ts';
import { createApp } from './web/app.ts';
import { createHttpServer } from './web/server.ts';
import { startHousekeeping, startMailLoop } from './housekeeping.ts';
import { registerSigningKey } from './elections/signingKeyRepo.ts';
import { createMailer } from './mail/createMailer.ts';

function fail(line: string): never {
  process.stderr.write(`veiltally: ${line}\n`);
  process.exit(1);
}

async function start(): Promise<void> {
  let config;
  try {
    config = loadConfig();
  } catch (e) {
    if (e instanceof ConfigError) fail(`bad configuration, ${e.message}`);
    throw e;
  }
  const logger = createLogger(config.logLevel);
  const secrets = loadSecrets(config);
  let db;
  try {
    db = openConfiguredDatabase(config);
  } catch (e) {
    if (e instanceof DataDirectoryLocked) fail(e.message);
    throw e;
  }
  try {
    await migrateLatest(db.knex);
  } catch (e) {
    await db.close().catch(() => undefined);
    if (e instanceof MigrationFailed) fail(`could not prepare the database, ${e.message}`);
    fail(`could not reach the database (${e instanceof Error ? e.message : String(e)})`);
  }
  try {
    await checkSecretsAgree(db.knex, secrets);
  } catch (e) {
    await db.close().catch(() => undefined);
    if (e instanceof SecretsDisagree) fail(e.message);
    throw e;
  }

  // Mail goes through the configured SMTP server, or into the data directory's outbox folder.
  const mailer = createMailer(config.mail);
  const ctx = { ...liveContext(db, secrets, keyDirectory(config.keyDir), config.ledger), mail: { mailer, publicUrl: config.publicUrl } };
  // The active signing key's public half is listed on /keys from the start, before its first statement.
  await registerSigningKey(db.knex, secrets.signingSeed, new Date());
  const app = createApp({ config, ctx, logger, sessionSecret: secrets.sessionSecret });
  const server: Server = createHttpServer(app).listen(config.port, config.host);
  await new Promise<void>((resolve, reject) => {
    server.once('listening', resolve);
    server.once('error', reject);
  }).catch((e: NodeJS.ErrnoException) => {
    fail(e.code === 'EADDRINUSE' ? `port ${config.port} is already in use (set PORT)` : `could not listen (${e.message})`);
  });
  const address = server.address();
  const port = typeof address === 'object' && address ? address.port : config.port;
  const housekeeping = startHousekeeping(ctx, logger);
  const mailLoop = startMailLoop(ctx, logger);
  logger.info({ url: `http://${config.host}:${port}`, db: db.engine }, `Veiltally listening on http://${config.host}:${port}`);

  let stopping = false;
  const stop = (signal: string) => {
    if (stopping) {
      logger.warn({ signal }, 'second signal: exiting now');
      process.exit(1);
    }
    stopping = true;
    logger.info({ signal }, 'shutting down: finishing requests in flight');
    housekeeping.stop();
    const mailStopped = mailLoop.stop();
    server.close(async () => {
      await mailStopped;
      await mailer.close().catch(() => undefined);
      await db.close().catch((e) => logger.error({ err: e }, 'database did not close cleanly'));
      logger.info('stopped');
      process.exit(0);
    });
    server.closeIdleConnections();
  };
  process.on('SIGTERM', () => stop('SIGTERM'));
  process.on('SIGINT', () => stop('SIGINT'));
}

start().catch((e) => fail(`failed to start (${e instanceof Error ? e.message : String(e)})`));
