import type pg from 'pg';
import { drizzle } from 'drizzle-orm/node-postgres';
import type { DbOrTx } from './client';
import * as schema from './schema';

/** One open transaction, seen both ways: raw statements on its connection and Drizzle on the same. */
export interface Transaction {
  /** The connection the transaction runs on, for named/prepared statements (`client.query(prepared(…))`). */
  client: pg.PoolClient;
  /** Drizzle on the same connection, for repositories that take `DbOrTx`. */
  tx: DbOrTx;
  /**
   * Ends the transaction with ROLLBACK instead of COMMIT once the work returns (a lost race whose
   * winner is read afterwards): nothing it wrote is kept, and the work's value is still returned.
   */
  discard(): void;
}

/**
 * The one way to run work in a transaction on a connection of its own: BEGIN (with the options), the
 * work, then COMMIT, or ROLLBACK when it throws or calls `discard()`. The connection is released in
 * every case. (`db.transaction` of Drizzle is the same thing for work that is Drizzle only.)
 */
export async function withTransaction<T>(
  pool: pg.Pool,
  work: (t: Transaction) => Promise<T>,
  opts: { isolation?: 'repeatable read' | 'serializable'; readOnly?: boolean } = {},
): Promise<T> {
  const client = await pool.connect();
  let discarded = false;
  try {
    const modes = [
      opts.isolation ? `isolation level ${opts.isolation}` : null,
      opts.readOnly ? 'read only' : null,
    ].filter(Boolean);
    await client.query(modes.length ? `BEGIN ${modes.join(' ')}` : 'BEGIN');
    // Drizzle on the connection is made only for work that uses it (building it costs more than a statement).
    let tx: DbOrTx | undefined;
    const out = await work({
      client,
      get tx() {
        return (tx ??= drizzle(client, { schema, casing: 'snake_case' }));
      },
      discard: () => (discarded = true),
    });
    await client.query(discarded ? 'ROLLBACK' : 'COMMIT');
    return out;
  } catch (e) {
    await client.query('ROLLBACK').catch(() => {});
    throw e;
  } finally {
    client.release();
  }
}
