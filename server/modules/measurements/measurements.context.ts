import type pg from 'pg';
import type { Db } from '#server/db/client';
import type { JobQueue } from '#jobs/queue-client';

/** What every part of the measurements module (intake, compute, recompute, programming) is given. */
export interface MeasurementsContext {
  db: Db;
  pool: pg.Pool;
  queue: JobQueue;
  /** The only source of "now". */
  clock: () => Date;
}
