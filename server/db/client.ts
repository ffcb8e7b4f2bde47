import pg from 'pg';
import { drizzle, type NodePgDatabase } from 'drizzle-orm/node-postgres';
import * as schema from './schema';

export type Db = NodePgDatabase<typeof schema>;
/** A database handle or an open transaction: repositories accept either. */
export type DbOrTx = Db | Parameters<Parameters<Db['transaction']>[0]>[0];

export interface Database {
  db: Db;
  pool: pg.Pool;
  close(): Promise<void>;
}

export function createDatabase(url: string, opts: { max?: number; applicationName?: string } = {}): Database {
  const pool = new pg.Pool({
    connectionString: url,
    max: opts.max ?? 10,
    application_name: opts.applicationName ?? 'phasewright',
  });
  // A connection that dies (the database restarted) must not crash the process. An idle one is reported
  // on the pool, which replaces it; one checked out (a transaction) emits 'error' on the client itself,
  // with no listener of the pool's attached while it is out: its query rejects, and the caller's
  // release(err) discards it.
  pool.on('error', () => {});
  pool.on('connect', (client) => client.on('error', () => {}));
  const db = drizzle(pool, { schema, casing: 'snake_case' });
  return { db, pool, close: () => pool.end() };
}
