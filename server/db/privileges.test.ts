import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestDatabase, type TestDatabase } from '#tests/harness/db';
import { APP_TABLE_ACCESS } from './privileges';

// The app role is what the server, the worker and the renderer connect as. Whatever code runs in them,
// it cannot undo the append-only records: it owns nothing, so DDL, trigger and function changes and
// TRUNCATE are refused by PostgreSQL's privilege checks; UPDATE and DELETE of the records are not granted.
const APPEND_ONLY = ['measurements', 'calibrations', 'programming_confirmations', 'travelers', 'audit_log'];

let t: TestDatabase;
let owner: pg.Client;

beforeAll(async () => {
  t = await createTestDatabase();
  owner = new pg.Client({ connectionString: t.ownerUrl });
  await owner.connect();
});
afterAll(async () => {
  await owner.end();
  await t.drop();
});

/** The PostgreSQL error code of a statement run as the app role, or 'ok' when it succeeded. */
async function asApp(sql: string): Promise<string> {
  try {
    await t.pool.query(sql);
    return 'ok';
  } catch (e) {
    return (e as { code?: string }).code ?? 'error';
  }
}

describe('the app role', () => {
  it('is not the owner role, and owns no table, function or schema', async () => {
    const { rows } = await t.pool.query<{ me: string }>('select current_user as me');
    const { rows: ownerRows } = await owner.query<{ me: string }>('select current_user as me');
    expect(rows[0].me).not.toBe(ownerRows[0].me);
    const { rows: owned } = await owner.query<{ n: number }>(
      `select (select count(*) from pg_class c join pg_roles r on r.oid = c.relowner where r.rolname = $1)
            + (select count(*) from pg_proc p join pg_roles r on r.oid = p.proowner where r.rolname = $1)
            + (select count(*) from pg_namespace n join pg_roles r on r.oid = n.nspowner where r.rolname = $1) as n`,
      [rows[0].me],
    );
    expect(Number(owned[0].n)).toBe(0);
  });

  it.each(APPEND_ONLY)('cannot TRUNCATE %s', async (table) => {
    expect(await asApp(`truncate ${table}`)).toBe('42501');
    expect(await asApp(`truncate ${table} cascade`)).toBe('42501');
  });

  it.each(APPEND_ONLY)('cannot UPDATE or DELETE rows of %s', async (table) => {
    const column = table === 'audit_log' ? 'reason' : 'id';
    expect(await asApp(`update ${table} set ${column} = ${column}`)).toBe('42501');
    expect(await asApp(`delete from ${table}`)).toBe('42501');
  });

  it('cannot disable or drop the append-only triggers, nor drop their function', async () => {
    expect(await asApp('alter table calibrations disable trigger calibrations_append_only')).toBe('42501');
    expect(await asApp('alter table travelers disable trigger all')).toBe('42501');
    expect(await asApp('drop trigger travelers_append_only on travelers')).toBe('42501');
    expect(await asApp('drop function refuse_change() cascade')).toBe('42501');
    expect(
      await asApp(
        'create or replace function refuse_change() returns trigger language plpgsql as $$ begin return new; end $$',
      ),
    ).toBe('42501');
  });

  it('cannot change the schema: ALTER, DROP or CREATE tables', async () => {
    expect(await asApp('alter table measurements add column note text')).toBe('42501');
    expect(await asApp('alter table units owner to current_user')).toBe('42501');
    expect(await asApp('drop table travelers')).toBe('42501');
    expect(await asApp('create table scratch (id int)')).toBe('42501');
    expect(await asApp('alter table pgboss.job add column x int')).toBe('42501');
    expect(await asApp('truncate pgboss.job')).toBe('42501');
    expect(await asApp('select * from drizzle.__drizzle_migrations')).toBe('42501');
  });

  it('may update only the mutable columns: a unit yes, a station key only its use and revocation', async () => {
    expect(await asApp(`update units set status = status`)).toBe('ok');
    expect(await asApp(`update station_keys set revoked_at = revoked_at`)).toBe('ok');
    expect(await asApp(`update station_keys set key_hash = key_hash`)).toBe('42501');
    expect(await asApp(`update units set id = id`)).toBe('42501');
    expect(await asApp(`delete from units`)).toBe('42501');
  });
});

describe('the append-only triggers', () => {
  it.each(APPEND_ONLY)('refuse TRUNCATE of %s even for the owner role', async (table) => {
    await expect(owner.query(`truncate ${table} cascade`)).rejects.toThrow(/append-only/);
  });
});

describe('the privilege list', () => {
  it('classifies every table of the schema (a new table must say what the app may do to it)', async () => {
    const { rows } = await owner.query<{ table_name: string }>(
      `select table_name from information_schema.tables where table_schema = 'public' and table_type = 'BASE TABLE'`,
    );
    const unclassified = rows.map((r) => r.table_name).filter((n) => !(n in APP_TABLE_ACCESS));
    expect(unclassified).toEqual([]);
  });
});
