import pg from 'pg';
import type { TestProject } from 'vitest/node';
import { ensurePostgres, ensureReplica } from '#server/ops/pg-local.mjs';
import { migrateDatabase } from '#server/db/migrate';
import { dropDatabaseForce } from './drop-database';

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
    /**
     * A hot standby of the test server (streaming replication): the app role's URL without the database
     * name's meaning (the harness swaps it), and the superuser's over its Unix socket. Empty when the test
     * server is external; `replicaError` says why it could not be made.
     */
    replicaAppUrl: string;
    replicaSuperuserUrl: string;
    replicaError: string;
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
    if (!alive(pid)) await dropDatabaseForce(admin, r.datname);
  }
  // The standby is made (or reused) while the server holds only the template databases: seconds.
  let replica: Awaited<ReturnType<typeof ensureReplica>> = null;
  let replicaError = '';
  try {
    replica = await ensureReplica(handle, { log: () => {} });
    if (!replica) replicaError = 'the test server is external (TEST_DATABASE_URL): no standby is made';
  } catch (e) {
    replicaError = e instanceof Error ? e.message : String(e);
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
  project.provide('replicaAppUrl', replica?.url ?? '');
  project.provide('replicaSuperuserUrl', replica?.superuserUrl ?? '');
  project.provide('replicaError', replicaError);
  return async () => {
    await dropDatabaseForce(admin, TEMPLATE_DB);
    await admin.end();
  };
}
