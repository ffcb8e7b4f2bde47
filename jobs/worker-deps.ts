import type { Db } from '#server/db/client';
import type { Logger } from '#server/lib/logger';
import type { JobQueue } from './queue-client';
import type pg from 'pg';
import type { Mailer } from '#server/modules/mail/mail.service';

/** What every job handler may use, passed in by the worker (tests build their own). */
export interface WorkerDeps {
  db: Db;
  pool: pg.Pool;
  logger: Logger;
  clock: () => Date;
  queue: JobQueue;
  /** Outgoing mail (alert e-mails); absent where a process sends none. */
  mailer?: Mailer;
  /** Base of links in e-mails. */
  publicUrl?: string;
}
