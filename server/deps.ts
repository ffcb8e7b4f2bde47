import type pg from 'pg';
import type { Env } from './env';
import type { Db } from './db/client';
import type { Logger } from './lib/logger';
import type { Mailer } from './modules/mail/mail.service';
import type { JobQueue } from '../jobs/queue-client';
import type { EventHub } from './modules/events/event-hub';

/**
 * Everything the HTTP app needs, passed in explicitly (tests build their own).
 * `clock` is the only source of "now" for rules that depend on time.
 */
export interface AppDeps {
  env: Env;
  db: Db;
  pool: pg.Pool;
  logger: Logger;
  clock: () => Date;
  mailer: Mailer;
  queue: JobQueue;
  /** Line events from PostgreSQL LISTEN/NOTIFY (long-polls, Server-Sent Events). */
  events: EventHub;
}
