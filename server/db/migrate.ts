import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { migrate } from 'drizzle-orm/node-postgres/migrator';
import { createDatabase, type Db } from './client';
import { grantAppPrivileges } from './privileges';
import { installJobQueue } from '#jobs/queue-client';

export const MIGRATIONS_FOLDER = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../drizzle');

/** Applies every migration in drizzle/ that the database has not seen yet (inside one transaction). */
export async function runMigrations(db: Db): Promise<void> {
  await migrate(db, { migrationsFolder: MIGRATIONS_FOLDER });
}

/**
 * Brings a database up to date as its owner role: the schema migrations, pg-boss's schema and every
 * queue (creating a queue is DDL: a partition of pg-boss's job table), then the app role's privileges
 * (server/db/privileges.ts). With `appRole` null one role does everything and nothing is granted.
 */
export async function migrateDatabase(ownerUrl: string, opts: { appRole: string | null }): Promise<void> {
  const database = createDatabase(ownerUrl, { max: 2, applicationName: 'phasewright-migrate' });
  try {
    await runMigrations(database.db);
    await installJobQueue(ownerUrl);
    if (opts.appRole) await grantAppPrivileges(database.pool, opts.appRole);
  } finally {
    await database.close();
  }
}

/** The user name in a postgres:// URL. */
export function urlUser(url: string): string {
  return decodeURIComponent(new URL(url).username);
}

/**
 * The app role to grant to, from the app URL and the owner URL: none when they name the same user
 * (one role does everything).
 */
export function appRoleOf(appUrl: string, ownerUrl: string | undefined): string | null {
  if (!ownerUrl) return null;
  const app = urlUser(appUrl);
  return app && app !== urlUser(ownerUrl) ? app : null;
}
