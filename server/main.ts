import type { AddressInfo } from 'node:net';
import { demoSettings, parseEnv } from './env';
import { createApp } from './app';
import { createDatabase } from './db/client';
import { appRoleOf, migrateDatabase } from './db/migrate';
import { seedDemoAccounts } from './db/seed';
import { createLogger } from './lib/logger';
import { createSmtpMailer } from './modules/mail/mail.service';
import { startJobQueue } from '#jobs/queue-client';
import type { AppDeps } from './deps';
import { createEventHub } from './modules/events/event-hub';
import { createObjectStore, storageSettingsOf } from './modules/storage/object-store';
import { useCalibrationStore } from './modules/read-models/calibration-store';

/**
 * The API + client server. Wires real dependencies, applies migrations, optionally seeds the demo,
 * and listens. `npm start` runs this next to the worker (jobs/worker.ts).
 */
export async function startServer(source?: NodeJS.ProcessEnv) {
  const env = parseEnv(source);
  const logger = createLogger(env.LOG_LEVEL, 'phasewright-server');
  // `npm start` (and a service manager's migration unit) migrate as the owner role before starting
  // the server, and set MIGRATE_ON_START=false: the app role may not change the schema.
  if (env.MIGRATE_ON_START) {
    const ownerUrl = env.DATABASE_OWNER_URL;
    await migrateDatabase(ownerUrl ?? env.DATABASE_URL, { appRole: appRoleOf(env.DATABASE_URL, ownerUrl) });
  }
  const database = createDatabase(env.DATABASE_URL, { max: 20, applicationName: 'phasewright-server' });
  // Statistics, containment searches and exports read from the replica when there is one.
  const readDatabase = env.DATABASE_READ_URL
    ? createDatabase(env.DATABASE_READ_URL, { max: 10, applicationName: 'phasewright-server-read' })
    : null;
  if (demoSettings(source).seedDemo) {
    if (await seedDemoAccounts(database.db, env.BCRYPT_COST)) logger.info('demo accounts created');
  }
  const queue = await startJobQueue(env.DATABASE_URL, database.pool, {
    onError: (err) => logger.warn({ err: err.message }, 'job queue: database error; retrying'),
  });
  const mailer = createSmtpMailer(env.SMTP_URL, env.MAIL_FROM);
  const events = createEventHub(env.DATABASE_URL, logger);
  await events.ready;
  const storage = createObjectStore(storageSettingsOf(env));
  // The bucket is created when missing; a store that is not up yet is tried again on the first upload.
  await storage
    .ensureBucket()
    .catch((err: unknown) =>
      logger.warn({ err, endpoint: env.STORAGE_ENDPOINT }, 'object storage not reachable yet'),
    );
  useCalibrationStore(env.STATISTICS_IN_MEMORY);
  const deps: AppDeps = {
    events,
    env,
    db: database.db,
    pool: database.pool,
    readDb: (readDatabase ?? database).db,
    readPool: (readDatabase ?? database).pool,
    logger,
    clock: () => new Date(),
    mailer,
    queue,
    storage,
  };
  const app = createApp(deps);
  const server = app.listen(env.PORT, env.HOST);
  await new Promise<void>((resolve, reject) => {
    server.once('listening', () => resolve());
    server.once('error', reject);
  });
  const port = (server.address() as AddressInfo).port;
  logger.info({ port, readReplica: Boolean(readDatabase) }, 'server listening');
  return {
    port,
    deps,
    async stop() {
      await new Promise<void>((r) => server.close(() => r()));
      await queue.stop();
      await events.close();
      mailer.close();
      storage.close();
      await readDatabase?.close();
      await database.close();
    },
  };
}

if (import.meta.url === `file://${process.argv[1]}`) {
  try {
    const s = await startServer();
    const stop = () => void s.stop().then(() => process.exit(0));
    process.on('SIGINT', stop);
    process.on('SIGTERM', stop);
  } catch (e) {
    console.error((e as Error).message);
    process.exit(1);
  }
}
