import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestDatabase, type TestDatabase } from '#tests/harness/db';
import { insertAudit } from './audit.repository';

let d: TestDatabase;
beforeAll(async () => {
  d = await createTestDatabase();
});
afterAll(async () => {
  await d?.drop();
});

// The triggers hold even for the owner role; the app role is refused earlier, by missing privileges.
describe('the audit log is append-only in the database itself', () => {
  it('accepts new entries', async () => {
    await insertAudit(d.db, { action: 'test.entry', reason: 'why', before: { a: 1 }, after: { a: 2 } });
    const { rows } = await d.pool.query('select action, before, after from audit_log');
    expect(rows).toEqual([{ action: 'test.entry', before: { a: 1 }, after: { a: 2 } }]);
  });

  it('refuses UPDATE', async () => {
    await expect(d.ownerPool().query(`update audit_log set reason = 'rewritten'`)).rejects.toThrow(
      /append-only/,
    );
    await expect(d.pool.query(`update audit_log set reason = 'rewritten'`)).rejects.toThrow(
      /permission denied/,
    );
  });

  it('refuses DELETE', async () => {
    await expect(d.ownerPool().query('delete from audit_log')).rejects.toThrow(/append-only/);
    await expect(d.pool.query('delete from audit_log')).rejects.toThrow(/permission denied/);
  });

  it('refuses TRUNCATE', async () => {
    await expect(d.ownerPool().query('truncate audit_log')).rejects.toThrow(/append-only/);
    await expect(d.pool.query('truncate audit_log')).rejects.toThrow(/permission denied/);
    const { rows } = await d.pool.query('select count(*)::int as n from audit_log');
    expect(rows[0].n).toBe(1);
  });
});
