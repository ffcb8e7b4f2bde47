import type pg from 'pg';
import type { Env } from './env';
import type { Db } from './db/client';
import type { Logger } from './lib/logger';
import type { Mailer } from './modules/mail/mail.service';
import type { JobQueue } from '#jobs/queue-client';
import type { EventHub } from './modules/events/event-hub';
import type { ObjectStore } from './modules/storage/object-store';

/**
 * Everything the HTTP app needs, passed in explicitly (tests build their own).
 * `clock` is the only source of "now" for rules that depend on time.
 */
export interface AppDeps {
  env: Env;
  db: Db;
  pool: pg.Pool;
  /**
   * The heavy reads (statistics, containment searches, exports): a read replica when DATABASE_READ_URL
   * is set, otherwise the same as `db`/`pool`. It may lag the primary by up to a few seconds; anything that
   * writes, or reads what it has just written (the station path), uses `db`.
   */
  readDb: Db;
  readPool: pg.Pool;
  logger: Logger;
  clock: () => Date;
  mailer: Mailer;
  queue: JobQueue;
  /** Line events from PostgreSQL LISTEN/NOTIFY (long-polls, Server-Sent Events). */
  events: EventHub;
  /** S3-compatible object storage (investigation attachments). */
  storage: ObjectStore;
}
