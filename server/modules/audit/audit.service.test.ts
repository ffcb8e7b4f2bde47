import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestDatabase, type TestDatabase } from '#tests/harness/db';
import { seedDemoAccounts } from '#server/db/seed';
import { findUserByUsername } from '../users/users.repository';
import { insertAudit } from './audit.repository';
import { auditEntries } from './audit.service';

let d: TestDatabase;
beforeAll(async () => {
  d = await createTestDatabase();
  await seedDemoAccounts(d.db, 4);
});
afterAll(async () => {
  await d?.drop();
});

describe('the audit log as people read it', () => {
  it('names the person who acted and the person acted on, not their ids', async () => {
    const admin = (await findUserByUsername(d.db, 'ada.admin'))!;
    const operator = (await findUserByUsername(d.db, 'olga.operator'))!;
    // An entry that kept only ids (as seeded history and system jobs write them).
    await insertAudit(d.db, {
      actorId: admin.id,
      action: 'users.role_changed',
      subjectType: 'user',
      subjectId: operator.id,
    });
    await insertAudit(d.db, {
      action: 'travelers.printed',
      subjectType: 'calibration',
      subjectId: '2b8f6f1e-4f3c-4c55-9e21-0c6f3a1d9b10',
      after: { serial: 'CV57B-24-100017' },
    });
    const [printed, changed] = await auditEntries(d.db, 10);
    expect(changed.actorName).toBe(admin.displayName);
    expect(changed.subjectLabel).toBe(operator.displayName);
    expect(printed.subjectLabel).toBe('unit CV57B-24-100017');
  });
});
