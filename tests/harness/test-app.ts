import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { parseEnv } from '#server/env';
import { createApp } from '#server/app';
import type { AppDeps } from '#server/deps';
import { createLogger } from '#server/lib/logger';
import { createSmtpMailer } from '#server/modules/mail/mail.service';
import { startFakeMailServer, type FakeMailServer } from '#server/modules/mail/fake-mail-server';
import { seedDemoAccounts } from '#server/db/seed';
import { startJobQueue } from '#jobs/queue-client';
import { createTestDatabase, type TestDatabase } from './db';
import type { Database } from '#server/db/client';
import { createEventHub } from '#server/modules/events/event-hub';
import { startFakeObjectStore, type FakeObjectStore } from '#server/modules/storage/fake-object-store';
import { createObjectStore, storageSettingsOf } from '#server/modules/storage/object-store';

/**
 * The origin test requests claim (the test app's PUBLIC_URL). State-changing requests with a session
 * cookie must name it, as a browser would, or the cross-site guard refuses them.
 */
export const TEST_ORIGIN = 'http://phasewright.test';

export interface TestApp {
  app: ReturnType<typeof createApp>;
  deps: AppDeps;
  database: TestDatabase;
  mail: FakeMailServer;
  /** The local fake object store (its own temporary folder) the app's `storage` talks to. */
  objects: FakeObjectStore;
  /** Moves the app's clock (lockouts, token expiry, sessions). */
  setNow(d: Date): void;
  close(): Promise<void>;
}

/**
 * The real app on a private database, with the demo accounts, a real pg-boss queue and the local
 * fake mail server on free ports. Only the clock is controllable.
 */
export async function createTestApp(
  opts: { seed?: boolean; database?: TestDatabase; readDatabase?: Database } = {},
): Promise<TestApp> {
  // `database`: run on this one (e.g. a restored copy) instead of a fresh clone of the template.
  const database = opts.database ?? (await createTestDatabase());
  const mail = await startFakeMailServer({});
  const objects = await startFakeObjectStore({
    dir: fs.mkdtempSync(path.join(os.tmpdir(), 'pw-objects-')),
  });
  const env = parseEnv({
    NODE_ENV: 'test',
    DATABASE_URL: database.url,
    SMTP_URL: `smtp://127.0.0.1:${mail.smtpPort}`,
    MAILBOX_URL: `http://127.0.0.1:${mail.httpPort}`,
    STORAGE_ENDPOINT: `http://127.0.0.1:${objects.port}`,
    PUBLIC_URL: TEST_ORIGIN,
    LOG_LEVEL: 'silent',
    CLIENT_DIST: '/nonexistent',
    // Tests stand in for many client addresses with X-Forwarded-For from loopback.
    TRUST_PROXY: 'loopback',
  });
  if (opts.seed ?? true) await seedDemoAccounts(database.db, env.BCRYPT_COST);
  const queue = await startJobQueue(database.url, database.pool);
  const events = createEventHub(database.url, createLogger('silent'));
  await events.ready;
  let now: Date | null = null;
  const deps: AppDeps = {
    env,
    db: database.db,
    pool: database.pool,
    // `readDatabase`: the heavy reads go there (a replica of `database`), as with DATABASE_READ_URL.
    readDb: (opts.readDatabase ?? database).db,
    readPool: (opts.readDatabase ?? database).pool,
    logger: createLogger('silent'),
    clock: () => now ?? new Date(),
    mailer: createSmtpMailer(env.SMTP_URL, env.MAIL_FROM),
    queue,
    events,
    storage: createObjectStore(storageSettingsOf(env)),
  };
  return {
    app: createApp(deps),
    deps,
    database,
    mail,
    objects,
    setNow(d) {
      now = d;
    },
    async close() {
      deps.mailer.close();
      await queue.stop();
      await events.close();
      await mail.close();
      deps.storage.close();
      await objects.close();
      fs.rmSync(objects.dir, { recursive: true, force: true });
      await database.drop();
    },
  };
}

/** Signs a demo account in and returns its session cookie ("pw_session=…") for supertest. */
export async function sessionCookie(
  app: TestApp['app'],
  username: string,
  password: string,
): Promise<string> {
  const { default: request } = await import('supertest');
  const res = await request(app).post('/api/auth/sign-in').send({ username, password });
  if (res.status !== 200)
    throw new Error(`sign-in of ${username} failed: ${res.status} ${JSON.stringify(res.body)}`);
  return (res.headers['set-cookie'] as unknown as string[])[0].split(';')[0];
}
