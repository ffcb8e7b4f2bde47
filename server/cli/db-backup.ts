// `npm run db:backup [-- --out DIR]`: a pg_dump custom-format backup of the database with a manifest
// (SHA-256 of the dump, row counts per table, a digest of the travelers' SHA-256 values) beside it,
// by default in the git-ignored .data/backups/. Local instance (PG_INSTANCE, default dev): started if
// it is not running. With DATABASE_URL: the owner URL DATABASE_OWNER_URL (else DATABASE_URL) is used.
import { dirname, join, relative, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';
import { ensurePostgres } from '../ops/pg-local.mjs';
import { backupDatabase } from '../db/backup';
import { toolSettings } from '../env';

const repoRoot = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');

try {
  const { values } = parseArgs({ options: { out: { type: 'string' } }, strict: true });
  const outDir = resolve(values.out ?? toolSettings().BACKUP_DIR ?? join(repoRoot, '.data', 'backups'));
  const pg = await ensurePostgres({ instance: toolSettings().PG_INSTANCE, log: () => {} });
  const t0 = performance.now();
  const { manifest, dumpPath, manifestPath } = await backupDatabase({
    ownerUrl: pg.ownerUrl,
    outDir,
    now: new Date(),
  });
  const rows = Object.values(manifest.rowCounts).reduce((a, b) => a + b, 0);
  const show = (p: string) => (p.startsWith(repoRoot) ? relative(repoRoot, p) : p);
  process.stdout.write(
    `backup of ${manifest.database}: ${show(dumpPath)} (${(manifest.bytes / 1e6).toFixed(1)} MB, ${rows} rows in ` +
      `${Object.keys(manifest.rowCounts).length} tables, ${((performance.now() - t0) / 1000).toFixed(1)} s)\n` +
      `manifest: ${show(manifestPath)}\nsha256: ${manifest.sha256}\n`,
  );
} catch (e) {
  process.stderr.write(`db:backup: ${e instanceof Error ? e.message : String(e)}\n`);
  process.exitCode = 1;
}
