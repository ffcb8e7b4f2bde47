import { createHash } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { inject } from 'vitest';
import { openTestDatabase, testDatabaseName, type TestDatabase } from '#tests/harness/db';
import { createTestApp, sessionCookie, type TestApp } from '#tests/harness/test-app';
import { seedDemoLine } from '../modules/demo/demo-line.seed';
import { renderFirstTraveler } from '../modules/travelers/travelers.service';
import { backupDatabase, BackupError, restoreDatabase, sha256OfFile } from './backup';

// A backup is only as good as its restore: back up a seeded line, restore it into a new database,
// compare what matters (every table's row count, every traveler's SHA-256), then run the app on the
// restored copy as the app role.
const NOW = new Date('2026-11-19T09:30:00Z');

let source: TestApp;
let restored: TestApp | null = null;
let restoredDb: TestDatabase | null = null;
let dir: string;
let dumpPath: string;
let appRole: string;

interface Figures {
  counts: Record<string, number>;
  travelers: { id: string; sha256: string }[];
}

async function figures(db: TestDatabase): Promise<Figures> {
  const pool = db.ownerPool();
  const { rows: tables } = await pool.query<{ name: string }>(
    `select table_name as name from information_schema.tables where table_schema = 'public' and table_type = 'BASE TABLE'`,
  );
  const counts: Record<string, number> = {};
  for (const t of tables) {
    counts[t.name] = Number((await pool.query(`select count(*) as n from "${t.name}"`)).rows[0].n);
  }
  const { rows: travelers } = await pool.query<{ id: string; sha256: string }>(
    'select id, sha256 from travelers order by id',
  );
  return { counts, travelers };
}

beforeAll(async () => {
  source = await createTestApp();
  await seedDemoLine(source.deps, { units: 24, now: NOW });
  // Print 1 of every judged station calibration, as the renderer would.
  const { rows } = await source.database.pool.query<{ id: string }>(
    `select id from calibrations where purpose = 'station' and verdict in ('pass', 'fail')`,
  );
  for (const r of rows) await renderFirstTraveler(source.deps.pool, r.id, NOW);
  dir = mkdtempSync(join(tmpdir(), 'pw-backup-'));
  appRole = decodeURIComponent(new URL(inject('databaseAppUrl')).username);
}, 120_000);

afterAll(async () => {
  await restored?.close();
  await source?.close();
  rmSync(dir, { recursive: true, force: true });
});

describe('backup and restore', () => {
  it('restores a backup with the same row counts and traveler hashes, and the app runs on the copy', async () => {
    const before = await figures(source.database);
    expect(before.travelers.length).toBeGreaterThan(10);

    const backup = await backupDatabase({ ownerUrl: source.database.ownerUrl, outDir: dir, now: NOW });
    dumpPath = backup.dumpPath;
    const manifest = JSON.parse(readFileSync(backup.manifestPath, 'utf8'));
    // The manifest's checksum is the dump's SHA-256 (node:crypto reads the file independently).
    expect(manifest.sha256).toBe(await sha256OfFile(dumpPath));
    expect(manifest.rowCounts['public.travelers']).toBe(before.travelers.length);
    expect(manifest.rowCounts['public.units']).toBe(before.counts.units);

    const name = testDatabaseName();
    const adminUrl = inject('databaseAdminUrl');
    const result = await restoreDatabase({ file: dumpPath, adminUrl, database: name, appRole });
    expect(result.replaced).toBe(false);
    restoredDb = openTestDatabase(name);
    const after = await figures(restoredDb);
    expect(after.counts).toEqual(before.counts);
    expect(after.travelers).toEqual(before.travelers);

    // The app on the restored copy, connected as the app role: healthy, a person signs in, and the
    // traveler it serves is the stored document with the same SHA-256.
    restored = await createTestApp({ database: restoredDb, seed: false });
    const health = await request(restored.app).get('/api/health');
    expect(health.status).toBe(200);
    const cookie = await sessionCookie(restored.app, 'quinn.quality', 'demo-quality-pass');
    const { rows } = await restoredDb.pool.query<{ serial: string }>(
      `select u.serial from travelers t join units u on u.id = t.unit_id order by t.created_at limit 1`,
    );
    const pdf = await request(restored.app)
      .get(`/api/units/${encodeURIComponent(rows[0].serial)}/traveler.pdf`)
      .set('Cookie', cookie)
      .buffer(true);
    expect(pdf.status).toBe(200);
    const served = createHash('sha256')
      .update(pdf.body as Buffer)
      .digest('hex');
    expect(pdf.headers['x-content-sha256']).toBe(served);
    expect(before.travelers.map((t) => t.sha256)).toContain(served);
    // Append-only still holds on the copy: the app role cannot rewrite what was restored.
    await expect(restoredDb.pool.query('truncate travelers')).rejects.toThrow(/permission denied/);
  }, 120_000);

  it('refuses to replace a database that holds tables unless forced, and changes nothing', async () => {
    const adminUrl = inject('databaseAdminUrl');
    await expect(
      restoreDatabase({ file: dumpPath, adminUrl, database: source.database.name, appRole }),
    ).rejects.toThrow(/exists and holds \d+ tables.*--force/s);
    const { rows } = await source.database.pool.query('select count(*)::int as n from units');
    expect(rows[0].n).toBeGreaterThan(0);
  });

  it('refuses a dump that does not match its manifest checksum, before touching any database', async () => {
    const damaged = join(dir, 'damaged.dump');
    const bytes = readFileSync(dumpPath);
    bytes[Math.floor(bytes.length / 2)] ^= 0xff;
    writeFileSync(damaged, bytes);
    const manifest = JSON.parse(readFileSync(`${dumpPath}.manifest.json`, 'utf8'));
    writeFileSync(`${damaged}.manifest.json`, JSON.stringify({ ...manifest, dumpFile: 'damaged.dump' }));
    const name = testDatabaseName();
    await expect(
      restoreDatabase({ file: damaged, adminUrl: inject('databaseAdminUrl'), database: name, appRole }),
    ).rejects.toThrow(BackupError);
    const admin = source.database.ownerPool();
    const { rows } = await admin.query('select 1 from pg_database where datname = $1', [name]);
    expect(rows).toEqual([]);
  });
});
