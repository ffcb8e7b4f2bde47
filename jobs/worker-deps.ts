import type { Db } from '../server/db/client';
import type { Logger } from '../server/lib/logger';
import type { JobQueue } from './queue-client';
import type pg from 'pg';

/** What every job handler may use, passed in by the worker (tests build their own). */
export interface WorkerDeps {
  db: Db;
  pool: pg.Pool;
  logger: Logger;
  clock: () => Date;
  queue: JobQueue;
}
