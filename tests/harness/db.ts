import { randomBytes } from 'node:crypto';
import pg from 'pg';
import { inject } from 'vitest';
import { createDatabase, type Database } from '../../server/db/client';

export interface TestDatabase extends Database {
  url: string;
  name: string;
  /** Closes the pool and drops the database. */
  drop(): Promise<void>;
}

/** A fresh database cloned from the migrated template: real schema, no rows, private to the caller. */
export async function createTestDatabase(): Promise<TestDatabase> {
  const adminUrl = inject('databaseAdminUrl');
  const template = inject('templateDatabase');
  const name = `pw_t_${inject('runTag')}_${randomBytes(4).toString('hex')}`;
  const admin = new pg.Client({ connectionString: adminUrl });
  await admin.connect();
  try {
    await admin.query(`create database "${name}" template "${template}"`);
  } finally {
    await admin.end();
  }
  const url = new URL(adminUrl);
  url.pathname = `/${name}`;
  const database = createDatabase(url.toString(), { max: 8, applicationName: 'phasewright-test' });
  return {
    ...database,
    url: url.toString(),
    name,
    async drop() {
      await database.close();
      const a = new pg.Client({ connectionString: adminUrl });
      await a.connect();
      try {
        await a.query(`drop database if exists "${name}" with (force)`);
      } finally {
        await a.end();
      }
    },
  };
}
