import type pg from 'pg';
import { BOSS_SCHEMA } from '#jobs/queue-client';

/**
 * What the app role (the role the server, the worker and the renderer connect as) may do to each
 * table of the public schema. Everything else belongs to the owner role, which runs migrations:
 * the app role owns nothing, so it cannot ALTER, DROP, TRUNCATE, disable triggers or drop functions.
 *
 * - every table: SELECT and INSERT;
 * - `update: 'row'`: UPDATE on every column but the identity ones (`id`, `created_at`), so a column a
 *   later migration adds to a mutable table is mutable too;
 * - `update: [columns]`: UPDATE on those columns only;
 * - `delete: true`: DELETE (only where the product really deletes rows);
 * - `appendOnly: true`: no UPDATE, no DELETE (the triggers of the append-only migrations refuse them
 *   for the owner as well).
 *
 * A table that is not listed gets SELECT and INSERT only, and `privileges.test.ts` fails until it is
 * classified here.
 */
export const APP_TABLE_ACCESS = {
  users: { update: 'row' },
  auth_tokens: { update: ['used_at'], delete: true },
  audit_log: { appendOnly: true },
  models: { update: 'row' },
  // Released versions are guarded by a trigger: only retiring them is allowed.
  recipes: { update: 'row' },
  units: { update: 'row' },
  stations: { update: 'row' },
  station_keys: { update: ['last_used_at', 'revoked_at'] },
  measurements: { appendOnly: true },
  calibrations: { appendOnly: true },
  // The statistics' copy of each calibration, written by triggers only (migration 0021): inserted with its
  // calibration (as the inserting role), a changed unit's serial, model or lots carried over by a function
  // that runs as the owner. The app role reads it and may not change a row.
  calibration_stats: { update: [] },
  programming_confirmations: { appendOnly: true },
  travelers: { appendOnly: true },
  // Line statistics: a watched chart's saved state moves on with every calibration; an alert is
  // acknowledged; a subscription is a person's own switch, turned off by deleting it.
  watched_charts: { update: 'row' },
  chart_alerts: { update: 'row' },
  alert_subscriptions: { update: 'row', delete: true },
  // Frozen control limits: every save or clearing is a new version, kept as it was set.
  control_limit_sets: { appendOnly: true },
  // A what-if run moves through queued → running → finished/cancelled and records its progress.
  what_if_runs: { update: 'row' },
  // Quality: a case is edited as it moves open → contained → closed; a hold is released once (the
  // release columns), never deleted; linked units stay linked; comments are a record.
  investigations: { update: 'row' },
  investigation_units: { update: [] },
  investigation_comments: { appendOnly: true },
  // An attachment is a record of what was received: never edited or deleted; removing one only fills
  // the removal columns (who, when, why), so the case's history keeps what it once held.
  investigation_attachments: { update: ['removed_at', 'removed_by', 'removed_by_name', 'removed_reason'] },
  unit_holds: {
    update: ['released_at', 'released_by', 'released_by_name', 'disposition', 'release_reason', 'attempt_budget'],
  },
  // A saved containment search is kept or deleted whole (never edited); both are audited.
  saved_searches: { update: [], delete: true },
  // Station qualification: a reference unit is certified or retired; a policy and the plant's shifts are
  // settings; readings of reference units and study trials, and lifted locks, are records.
  reference_units: { update: ['certified_offset_deg', 'tolerance_deg', 'certified_from', 'retired_at'] },
  qualification_policies: { update: 'row' },
  plant_shifts: { update: 'row', delete: true },
  qualification_runs: { appendOnly: true },
  qualification_overrides: { appendOnly: true },
  gauge_studies: { update: ['status', 'finished_at'] },
  gauge_study_measurements: { appendOnly: true },
} as const satisfies Record<string, TableAccess>;

export type TableAccess =
  { appendOnly: true } | { update: 'row' | readonly string[]; delete?: true; appendOnly?: never };

/** Columns that identify a row and never change, even in a mutable table. */
const IDENTITY_COLUMNS = ['id', 'created_at'];

const ident = (name: string) => `"${name.replace(/"/g, '""')}"`;

/**
 * Grants the app role exactly its privileges, after revoking whatever it had (so running it again, or
 * after a migration, converges). Run as the owner role after every migration and after a restore.
 * pg-boss keeps its jobs in its own schema, created by the owner at migrate time; the app role may
 * read and write its rows (fetching, completing and archiving jobs) but not change its tables.
 */
export async function grantAppPrivileges(pool: pg.Pool, appRole: string): Promise<void> {
  const role = ident(appRole);
  const client = await pool.connect();
  try {
    await grantOn(client, appRole, role);
  } finally {
    client.release();
  }
}

async function grantOn(client: pg.PoolClient, appRole: string, role: string): Promise<void> {
  const { rows: owned } = await client.query<{ n: number }>(
    `select count(*)::int as n from pg_class c join pg_roles r on r.oid = c.relowner where r.rolname = $1`,
    [appRole],
  );
  if (owned[0].n > 0) {
    throw new Error(
      `The app role ${appRole} owns ${owned[0].n} database objects: it must own nothing. ` +
        `Reassign them to the owner role (REASSIGN OWNED BY ${appRole} TO <owner>) and migrate again.`,
    );
  }
  const { rows: columns } = await client.query<{ table_name: string; column_name: string }>(
    `select table_name, column_name from information_schema.columns
      where table_schema = 'public' order by table_name, ordinal_position`,
  );
  const statements = [
    // PostgreSQL before 15 lets every role create objects in the public schema.
    'revoke create on schema public from public',
    `revoke all on all tables in schema public from ${role}`,
    `revoke all on all sequences in schema public from ${role}`,
    `grant usage on schema public to ${role}`,
    `grant select, insert on all tables in schema public to ${role}`,
    `grant usage, select on all sequences in schema public to ${role}`,
  ];
  const access = APP_TABLE_ACCESS as Record<string, TableAccess>;
  for (const [table, rule] of Object.entries(access)) {
    if (rule.appendOnly) continue;
    const tableColumns = columns.filter((c) => c.table_name === table).map((c) => c.column_name);
    if (tableColumns.length === 0) continue;
    const mutable =
      rule.update === 'row'
        ? tableColumns.filter((c) => !IDENTITY_COLUMNS.includes(c))
        : rule.update.filter((c) => tableColumns.includes(c));
    if (mutable.length > 0)
      statements.push(`grant update (${mutable.map(ident).join(', ')}) on ${ident(table)} to ${role}`);
    if (rule.delete) statements.push(`grant delete on ${ident(table)} to ${role}`);
  }
  const { rows: boss } = await client.query(`select 1 from pg_namespace where nspname = $1`, [BOSS_SCHEMA]);
  if (boss.length > 0) {
    const schema = ident(BOSS_SCHEMA);
    statements.push(
      `revoke create on schema ${schema} from public`,
      `grant usage on schema ${schema} to ${role}`,
      `grant select, insert, update, delete on all tables in schema ${schema} to ${role}`,
      `grant usage, select on all sequences in schema ${schema} to ${role}`,
    );
  }
  // The migrations' own bookkeeping is the owner's alone.
  const { rows: drizzle } = await client.query(`select 1 from pg_namespace where nspname = 'drizzle'`);
  if (drizzle.length > 0) statements.push(`revoke all on schema drizzle from ${role}`);
  await client.query(`begin`);
  try {
    for (const s of statements) await client.query(s);
    await client.query('commit');
  } catch (e) {
    await client.query('rollback');
    throw e;
  }
}
