import pg from 'pg';
import type { TestProject } from 'vitest/node';
import { ensurePostgres } from '../../server/ops/pg-local.mjs';
import { migrateDatabase } from '../../server/db/migrate';

/** Databases of a run are named after the process that ran its global setup. */
const runTag = `${process.pid}`;
const TEMPLATE_DB = `pw_tpl_${runTag}`;

function alive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch {
    return false;
  }
}

declare module 'vitest' {
  export interface ProvidedContext {
    databaseAdminUrl: string;
    /** The app role on the test server (any database: the harness swaps the database name). */
    databaseAppUrl: string;
    templateDatabase: string;
    runTag: string;
  }
}

/**
 * Starts (or reuses) the private test PostgreSQL and builds a template database with every
 * migration applied and the app role's privileges granted. Each test file then clones the template into a database of its own
 * (tests/harness/db.ts), so files never see each other's rows and run in parallel.
 */
export default async function setup(project: TestProject): Promise<() => Promise<void>> {
  const handle = await ensurePostgres({ instance: 'test', log: () => {} });
  const admin = new pg.Client({ connectionString: handle.adminUrl });
  await admin.connect();
  // Leftovers of interrupted earlier runs (their process is gone); concurrent runs are left alone.
  const { rows } = await admin.query<{ datname: string }>(
    `select datname from pg_database where datname ~ '^pw_(t|tpl)_[0-9]+'`,
  );
  for (const r of rows) {
    const pid = Number(/^pw_(?:t|tpl)_(\d+)/.exec(r.datname)?.[1]);
    if (!alive(pid)) await admin.query(`drop database if exists "${r.datname}" with (force)`);
  }
  await admin.query(`create database "${TEMPLATE_DB}"`);
  const templateUrl = new URL(handle.adminUrl);
  templateUrl.pathname = `/${TEMPLATE_DB}`;
  // The template is migrated as the owner and its privileges granted to the app role; clones keep both.
  await migrateDatabase(templateUrl.toString(), { appRole: handle.appRole });
  project.provide('databaseAdminUrl', handle.adminUrl);
  project.provide('databaseAppUrl', handle.url);
  project.provide('templateDatabase', TEMPLATE_DB);
  project.provide('runTag', runTag);
  return async () => {
    await admin.query(`drop database if exists "${TEMPLATE_DB}" with (force)`);
    await admin.end();
  };
}
