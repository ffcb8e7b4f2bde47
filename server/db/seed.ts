import type { Db } from './client';
import { countUsers, insertUsers } from '../modules/users/users.repository';
import { hashSecret } from '../modules/auth/auth.service';
import { insertAudit } from '../modules/audit/audit.repository';
import type { Role } from '#shared/schemas/roles';

/**
 * The demo accounts of the invented scenario (Corvane Motion Ltd, Hollin Ridge Works). Printed by
 * `npm start` and used by the browser tests. Passwords are public: demo only.
 */
export const DEMO_ACCOUNTS: {
  username: string;
  displayName: string;
  email: string;
  role: Role;
  password: string;
  badgeCode?: string;
  pin?: string;
}[] = [
  {
    username: 'ada.admin',
    displayName: 'Ada Okonkwo-Reyes',
    email: 'ada.admin@corvane.example',
    role: 'admin',
    password: 'demo-admin-pass',
  },
  {
    username: 'evan.engineer',
    displayName: 'Evan Thorsby',
    email: 'evan.engineer@corvane.example',
    role: 'engineer',
    password: 'demo-engineer-pass',
  },
  {
    // A second engineer, so a recipe change can be reviewed by someone other than its author.
    username: 'rosa.engineer',
    displayName: 'Rosa Kettleby',
    email: 'rosa.engineer@corvane.example',
    role: 'engineer',
    password: 'demo-engineer2-pass',
  },
  {
    username: 'quinn.quality',
    displayName: 'Quinn Abernethy',
    email: 'quinn.quality@corvane.example',
    role: 'quality',
    password: 'demo-quality-pass',
  },
  {
    username: 'olga.operator',
    displayName: 'Olga Varnavas',
    email: 'olga.operator@corvane.example',
    role: 'operator',
    password: 'demo-operator-pass',
    badgeCode: 'OP-1001',
    pin: '2468',
  },
  {
    username: 'tomas.operator',
    displayName: 'Tomás Ilunga',
    email: 'tomas.operator@corvane.example',
    role: 'operator',
    password: 'demo-operator2-pass',
    badgeCode: 'OP-1002',
    pin: '1357',
  },
];

/** Creates the demo accounts when the database has no accounts yet; returns whether it did. */
export async function seedDemoAccounts(db: Db, bcryptCost: number): Promise<boolean> {
  if ((await countUsers(db)) > 0) return false;
  const rows = await Promise.all(
    DEMO_ACCOUNTS.map(async (a) => ({
      username: a.username,
      displayName: a.displayName,
      email: a.email,
      role: a.role,
      passwordHash: await hashSecret(a.password, bcryptCost),
      badgeCode: a.badgeCode ?? null,
      pinHash: a.pin ? await hashSecret(a.pin, bcryptCost) : null,
    })),
  );
  await db.transaction(async (tx) => {
    await insertUsers(tx, rows);
    await insertAudit(tx, {
      action: 'demo.accounts_seeded',
      reason: 'first start with an empty database',
      after: { usernames: DEMO_ACCOUNTS.map((a) => a.username) },
    });
  });
  return true;
}
