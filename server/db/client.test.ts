import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestDatabase, type TestDatabase } from '#tests/harness/db';

// A database restart drops every connection, including one a transaction holds. The pool must not
// let the dropped connection's 'error' event go unhandled (that would end the process).
let t: TestDatabase;
beforeAll(async () => {
  t = await createTestDatabase();
});
afterAll(async () => {
  await t.drop();
});

/** Ends this database's backends with the given application name (the app role may end its own). */
async function dropConnections(applicationName: string): Promise<number> {
  const { rows } = await t.pool.query<{ n: number }>(
    `select count(pg_terminate_backend(pid))::int as n from pg_stat_activity
      where datname = current_database() and application_name = $1 and pid <> pg_backend_pid()`,
    [applicationName],
  );
  return rows[0].n;
}

describe('the database pool', () => {
  it('a pooled connection dropped in the middle of a transaction fails that transaction only', async () => {
    const client = await t.pool.connect();
    try {
      await client.query('begin');
      await client.query(`set application_name = 'phasewright-doomed'`);
      expect(await dropConnections('phasewright-doomed')).toBe(1);
      // The connection learns of its end while no query of its own runs on it.
      await new Promise((r) => setTimeout(r, 300));
      await expect(client.query('select 1')).rejects.toThrow();
    } finally {
      // The dead client emitted 'error' while checked out; the process is still here to release it.
      client.release(true);
    }
    const { rows } = await t.pool.query<{ ok: number }>('select 1 as ok');
    expect(rows).toEqual([{ ok: 1 }]);
  });
});
