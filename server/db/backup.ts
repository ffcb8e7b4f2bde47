import { spawn } from 'node:child_process';
import { createHash } from 'node:crypto';
import {
  chmodSync,
  createReadStream,
  existsSync,
  mkdirSync,
  readFileSync,
  renameSync,
  statSync,
  writeFileSync,
} from 'node:fs';
import { basename, dirname, join } from 'node:path';
import pg from 'pg';
import { findPgBinDir } from '../ops/pg-local.mjs';
import { grantAppPrivileges } from './privileges';
import { childProcessEnv, processEnvironment } from '../env';

/**
 * Backups of the whole database (every unit's lifetime record, the audit log, the job queue) as a
 * pg_dump custom-format file, with a manifest beside it: the file's SHA-256, the row count of every
 * table and a digest of the travelers' SHA-256 values, all read in the very snapshot the dump was
 * taken from. A restore checks the file against the manifest before it touches anything, restores
 * into a new database, checks the row counts and the traveler digest again, grants the app role its
 * privileges and only then puts the copy in place.
 */

export interface BackupManifest {
  format: 'phasewright-backup/1';
  dumpFile: string;
  sha256: string;
  bytes: number;
  database: string;
  createdAt: string;
  serverVersion: string;
  /** Migrations applied in the backed-up database (drizzle's count). */
  migrations: number;
  /** Rows per table (`schema.table`) of the public schema, in the dump's snapshot. */
  rowCounts: Record<string, number>;
  /** SHA-256 over the sorted `id:sha256` lines of every traveler document. */
  travelersDigest: string;
}

export class BackupError extends Error {}

/** Environment for pg_dump/pg_restore: the connection from a URL, the password never on the command line. */
function pgEnv(url: string, database?: string): NodeJS.ProcessEnv {
  const u = new URL(url);
  return {
    ...childProcessEnv(),
    PGHOST: u.hostname,
    PGPORT: u.port || '5432',
    PGUSER: decodeURIComponent(u.username),
    PGPASSWORD: decodeURIComponent(u.password),
    PGDATABASE: database ?? decodeURIComponent(u.pathname.replace(/^\//, '')),
    ...(u.searchParams.get('sslmode') ? { PGSSLMODE: u.searchParams.get('sslmode')! } : {}),
  };
}

/** pg_dump / pg_restore: from PG_BINDIR or the newest Debian server package, else from PATH. */
function tool(name: 'pg_dump' | 'pg_restore'): string {
  const found = findPgBinDir(processEnvironment());
  return found ? join(found.binDir, name) : name;
}

function runTool(file: string, args: string[], env: NodeJS.ProcessEnv): Promise<void> {
  return new Promise((resolve, reject) => {
    const child = spawn(file, args, { env, stdio: ['ignore', 'ignore', 'pipe'] });
    let stderr = '';
    child.stderr.on('data', (c: Buffer) => (stderr += c.toString()));
    child.on('error', (e) =>
      reject(
        new BackupError(
          `Cannot run ${file}: ${e.message}. Install the PostgreSQL client programs or set PG_BINDIR.`,
        ),
      ),
    );
    child.on('exit', (code) =>
      code === 0
        ? resolve()
        : reject(new BackupError(`${basename(file)} failed (exit ${code}):\n${stderr.trim()}`)),
    );
  });
}

export function sha256OfFile(path: string): Promise<string> {
  return new Promise((resolve, reject) => {
    const hash = createHash('sha256');
    createReadStream(path)
      .on('data', (c) => hash.update(c))
      .on('error', reject)
      .on('end', () => resolve(hash.digest('hex')));
  });
}

/** Row counts, migration count and traveler digest, read through `client` (inside its snapshot). */
async function contentFigures(client: pg.ClientBase) {
  const { rows: tables } = await client.query<{ name: string }>(
    `select table_name as name from information_schema.tables
      where table_schema = 'public' and table_type = 'BASE TABLE' order by table_name`,
  );
  const rowCounts: Record<string, number> = {};
  for (const t of tables) {
    const { rows } = await client.query<{ n: string }>(`select count(*) as n from public."${t.name}"`);
    rowCounts[`public.${t.name}`] = Number(rows[0].n);
  }
  const { rows: m } = await client.query<{ n: string }>(
    `select count(*) as n from drizzle.__drizzle_migrations`,
  );
  const { rows: docs } = await client.query<{ line: string }>(
    `select id::text || ':' || sha256 as line from travelers order by id`,
  );
  const travelersDigest = createHash('sha256')
    .update(docs.map((d) => d.line).join('\n'))
    .digest('hex');
  return { rowCounts, migrations: Number(m[0].n), travelersDigest };
}

/**
 * Dumps the database `ownerUrl` names (as its owner, who can read everything) into `outDir` and writes
 * the manifest beside it. Returns the manifest and both paths.
 */
export async function backupDatabase(opts: { ownerUrl: string; outDir: string; now: Date }) {
  const now = opts.now;
  mkdirSync(opts.outDir, { recursive: true, mode: 0o700 });
  const database = decodeURIComponent(new URL(opts.ownerUrl).pathname.replace(/^\//, ''));
  const stamp = now
    .toISOString()
    .replace(/[-:]/g, '')
    .replace(/\.\d+Z$/, 'Z');
  const dumpPath = join(opts.outDir, `${database}-${stamp}.dump`);
  const manifestPath = `${dumpPath}.manifest.json`;
  const partial = `${dumpPath}.partial`;

  // One snapshot for the dump and for the figures: the transaction that exports it stays open until
  // pg_dump has started from it.
  const client = new pg.Client({ connectionString: opts.ownerUrl, application_name: 'phasewright-backup' });
  client.on('error', () => {});
  await client.connect();
  try {
    await client.query('begin isolation level repeatable read read only');
    const { rows } = await client.query<{ snapshot: string; version: string }>(
      `select pg_export_snapshot() as snapshot, current_setting('server_version') as version`,
    );
    const figures = await contentFigures(client);
    await runTool(
      tool('pg_dump'),
      ['--format=custom', '--compress=6', `--snapshot=${rows[0].snapshot}`, `--file=${partial}`],
      pgEnv(opts.ownerUrl),
    );
    await client.query('commit');
    // The dump holds password hashes and station key hashes: readable by its owner only.
    chmodSync(partial, 0o600);
    renameSync(partial, dumpPath);
    const manifest: BackupManifest = {
      format: 'phasewright-backup/1',
      dumpFile: basename(dumpPath),
      sha256: await sha256OfFile(dumpPath),
      bytes: statSync(dumpPath).size,
      database,
      createdAt: now.toISOString(),
      serverVersion: rows[0].version,
      ...figures,
    };
    writeFileSync(manifestPath, `${JSON.stringify(manifest, null, 2)}\n`, { mode: 0o600 });
    return { manifest, dumpPath, manifestPath };
  } finally {
    await client.end().catch(() => {});
  }
}

/** The manifest for a dump file (or the manifest file itself), and the dump's path. */
export function readBackup(file: string): { manifest: BackupManifest; dumpPath: string } {
  const manifestPath = file.endsWith('.manifest.json') ? file : `${file}.manifest.json`;
  if (!existsSync(manifestPath)) {
    throw new BackupError(
      `No manifest beside the backup: ${manifestPath} is missing. A backup is the .dump file and its .manifest.json.`,
    );
  }
  let manifest: BackupManifest;
  try {
    manifest = JSON.parse(readFileSync(manifestPath, 'utf8')) as BackupManifest;
  } catch {
    throw new BackupError(`${manifestPath} is not a readable manifest (invalid JSON).`);
  }
  if (manifest.format !== 'phasewright-backup/1') {
    throw new BackupError(`${manifestPath} is not a Phasewright backup manifest.`);
  }
  const dumpPath = join(dirname(manifestPath), manifest.dumpFile);
  if (!existsSync(dumpPath))
    throw new BackupError(`The dump file ${dumpPath} named by the manifest is missing.`);
  return { manifest, dumpPath };
}

export interface RestoreResult {
  database: string;
  replaced: boolean;
  rowCounts: Record<string, number>;
  ms: number;
}

/**
 * Restores a backup into `database` on the server `adminUrl` names (the owner role on a maintenance
 * database such as `postgres`; it needs CREATEDB). Refuses, before changing anything, when the file
 * does not match its manifest's SHA-256, or when `database` exists and holds tables unless `force`.
 * The restore goes into a new database first; only when its row counts and traveler digest match the
 * manifest is the old database (if any) dropped and the new one renamed into place. Then the app role
 * gets its privileges (server/db/privileges.ts), so the processes can connect as before.
 */
export async function restoreDatabase(opts: {
  file: string;
  adminUrl: string;
  database: string;
  appRole: string | null;
  force?: boolean;
}): Promise<RestoreResult> {
  const t0 = performance.now();
  const { manifest, dumpPath } = readBackup(opts.file);
  const actual = await sha256OfFile(dumpPath);
  if (actual !== manifest.sha256) {
    throw new BackupError(
      `${dumpPath} does not match its manifest (SHA-256 ${actual}, expected ${manifest.sha256}): the file is damaged or not the one backed up. Nothing was restored.`,
    );
  }
  if (!/^[A-Za-z_][A-Za-z0-9_]{0,50}$/.test(opts.database)) {
    throw new BackupError(
      `"${opts.database}" is not a database name this tool restores into (letters, digits, _).`,
    );
  }
  const admin = new pg.Client({ connectionString: opts.adminUrl, application_name: 'phasewright-restore' });
  admin.on('error', () => {});
  await admin.connect();
  const staging = `${opts.database}_restoring`.slice(0, 63);
  try {
    const exists =
      (await admin.query(`select 1 from pg_database where datname = $1`, [opts.database])).rows.length > 0;
    let replaced = false;
    if (exists) {
      const tables = await tableCount(opts.adminUrl, opts.database);
      if (tables > 0 && !opts.force) {
        throw new BackupError(
          `The database ${opts.database} exists and holds ${tables} tables. Restore into another database ` +
            `(--database NAME), or add --force to replace it (its current contents are lost).`,
        );
      }
      replaced = tables > 0;
    }
    await admin.query(`drop database if exists "${staging}" with (force)`);
    await admin.query(`create database "${staging}"`);
    const stagingUrl = new URL(opts.adminUrl);
    stagingUrl.pathname = `/${staging}`;
    // Objects belong to the role restoring them (the owner), whatever role owned them before; the app
    // role's grants are applied afresh below.
    await runTool(
      tool('pg_restore'),
      ['--no-owner', '--no-acl', '--exit-on-error', '--single-transaction', `--dbname=${staging}`, dumpPath],
      pgEnv(opts.adminUrl, staging),
    );
    const check = new pg.Client({ connectionString: stagingUrl.toString() });
    check.on('error', () => {});
    await check.connect();
    try {
      const figures = await contentFigures(check);
      const differ = Object.keys({ ...manifest.rowCounts, ...figures.rowCounts }).filter(
        (k) => manifest.rowCounts[k] !== figures.rowCounts[k],
      );
      if (differ.length > 0 || figures.travelersDigest !== manifest.travelersDigest) {
        throw new BackupError(
          `The restored copy does not match the manifest (${differ.length ? `row counts of ${differ.join(', ')}` : 'traveler digest'}); ` +
            `it was left in ${staging} for inspection and ${opts.database} was not changed.`,
        );
      }
      if (opts.appRole) {
        const pool = new pg.Pool({ connectionString: stagingUrl.toString(), max: 1 });
        try {
          await grantAppPrivileges(pool, opts.appRole);
        } finally {
          await pool.end();
        }
      }
    } finally {
      await check.end().catch(() => {});
    }
    if (exists) await admin.query(`drop database "${opts.database}" with (force)`);
    await admin.query(`alter database "${staging}" rename to "${opts.database}"`);
    return {
      database: opts.database,
      replaced,
      rowCounts: manifest.rowCounts,
      ms: Math.round(performance.now() - t0),
    };
  } finally {
    await admin.end().catch(() => {});
  }
}

/** Tables in a database's public and drizzle schemas (0 for an empty database). */
async function tableCount(adminUrl: string, database: string): Promise<number> {
  const url = new URL(adminUrl);
  url.pathname = `/${database}`;
  const c = new pg.Client({ connectionString: url.toString() });
  c.on('error', () => {});
  await c.connect();
  try {
    const { rows } = await c.query<{ n: string }>(
      `select count(*) as n from information_schema.tables where table_schema in ('public', 'drizzle', 'pgboss')`,
    );
    return Number(rows[0].n);
  } finally {
    await c.end().catch(() => {});
  }
}
