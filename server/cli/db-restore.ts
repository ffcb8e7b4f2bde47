// `npm run db:restore -- FILE [--database NAME] [--force]`: restores a backup made by db:backup.
// Checks the dump against its manifest's SHA-256 first; restores into a fresh database (by default
// the instance's own database name); refuses to replace a database that holds tables unless --force;
// checks row counts and traveler digest against the manifest; grants the app role its privileges.
// Stop `npm start` (or the services) first when replacing the database it uses.
import { parseArgs } from 'node:util';
import { ensurePostgres } from '../ops/pg-local.mjs';
import { BackupError, restoreDatabase } from '../db/backup';
import { toolSettings } from '../env';

const USAGE = 'usage: npm run db:restore -- FILE [--database NAME] [--force]';

try {
  const { values, positionals } = parseArgs({
    options: { database: { type: 'string' }, force: { type: 'boolean', default: false } },
    allowPositionals: true,
    strict: true,
  });
  if (positionals.length !== 1) throw new BackupError(`name one backup file.\n${USAGE}`);
  const pg = await ensurePostgres({ instance: toolSettings().PG_INSTANCE, log: () => {} });
  const result = await restoreDatabase({
    file: positionals[0],
    adminUrl: pg.adminUrl,
    database: values.database ?? pg.database,
    appRole: pg.appRole,
    force: values.force,
  });
  const rows = Object.values(result.rowCounts).reduce((a, b) => a + b, 0);
  process.stdout.write(
    `restored into ${result.database}${result.replaced ? ' (replacing its previous contents)' : ''}: ` +
      `${rows} rows, counts and traveler digest match the manifest, app role privileges granted ` +
      `(${(result.ms / 1000).toFixed(1)} s)\n`,
  );
} catch (e) {
  const known = e instanceof BackupError || (e as { code?: string }).code?.startsWith('ERR_PARSE_ARGS');
  process.stderr.write(`db:restore: ${e instanceof Error ? e.message : String(e)}\n`);
  process.exitCode = known ? 2 : 1;
}
