import { randomBytes } from 'node:crypto';
import pg from 'pg';
import { inject } from 'vitest';
import { createDatabase, type Database } from '#server/db/client';
import { dropDatabaseForce } from './drop-database';

export interface TestDatabase extends Database {
  /** The app role on this database: what the server, the worker and `db`/`pool` here connect as. */
  url: string;
  /** The owner role on this database (migrations, backups, fixtures the app itself may not write). */
  ownerUrl: string;
  name: string;
  /**
   * A pool on the owner role, for what only the owner may try (e.g. proving a trigger refuses even
   * the owner). Opened on first use.
   */
  ownerPool(): pg.Pool;
  /** Closes the pools and drops the database. */
  drop(): Promise<void>;
}

/**
 * A fresh database cloned from the migrated template: real schema, no rows, private to the caller.
 * `db` and `pool` connect as the app role, like the running processes do.
 */
export async function createTestDatabase(): Promise<TestDatabase> {
  const adminUrl = inject('databaseAdminUrl');
  const template = inject('templateDatabase');
  const name = testDatabaseName();
  const admin = new pg.Client({ connectionString: adminUrl });
  await admin.connect();
  try {
    await admin.query(`create database "${name}" template "${template}"`);
  } finally {
    await admin.end();
  }
  return openTestDatabase(name);
}

/** A name for a database of this test run (dropped with the run's leftovers if a run is interrupted). */
export function testDatabaseName(): string {
  return `pw_t_${inject('runTag')}_${randomBytes(4).toString('hex')}`;
}

/** Opens an existing database of the test server (e.g. one a test restored a backup into). */
export function openTestDatabase(name: string): TestDatabase {
  const adminUrl = inject('databaseAdminUrl');
  const ownerUrl = new URL(adminUrl);
  ownerUrl.pathname = `/${name}`;
  const url = new URL(inject('databaseAppUrl'));
  url.pathname = `/${name}`;
  const database = createDatabase(url.toString(), { max: 8, applicationName: 'phasewright-test' });
  let owner: pg.Pool | undefined;
  return {
    ...database,
    ownerPool() {
      owner ??= createDatabase(ownerUrl.toString(), {
        max: 2,
        applicationName: 'phasewright-test-owner',
      }).pool;
      return owner;
    },
    url: url.toString(),
    ownerUrl: ownerUrl.toString(),
    name,
    async drop() {
      await database.close();
      await owner?.end();
      const a = new pg.Client({ connectionString: adminUrl });
      await a.connect();
      try {
        await dropDatabaseForce(a, name);
      } finally {
        await a.end();
      }
    },
  };
}
