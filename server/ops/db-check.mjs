// Fails when the Drizzle schema (server/db/schema.ts) and the committed migrations in drizzle/
// disagree: it lets drizzle-kit generate into a scratch copy of drizzle/ and checks that no new
// migration appears. Run by `npm test` and `npm run db:check`.
import { cpSync, mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { isMain, prefixedLog, repoRoot, run } from './proc.mjs';

/** @returns {Promise<{ ok: boolean, message: string }>} */
export async function checkMigrationsMatchSchema() {
  const scratch = mkdtempSync(join(tmpdir(), 'phasewright-drift-'));
  try {
    cpSync(join(repoRoot, 'drizzle'), scratch, { recursive: true });
    const before = new Set(readdirSync(scratch).filter((f) => f.endsWith('.sql')));
    const result = await run(
      join(repoRoot, 'node_modules', '.bin', 'drizzle-kit'),
      ['generate', '--name', 'drift'],
      {
        cwd: repoRoot,
        env: { ...process.env, DRIZZLE_OUT: scratch },
        timeoutMs: 120_000,
      },
    );
    if (result.code !== 0) {
      return { ok: false, message: `drizzle-kit generate failed:\n${result.stdout}\n${result.stderr}` };
    }
    const added = readdirSync(scratch).filter((f) => f.endsWith('.sql') && !before.has(f));
    if (added.length > 0) {
      return {
        ok: false,
        message:
          'The schema in server/db/schema.ts has changes that no committed migration holds. ' +
          'Run `npm run db:generate -- --name <what-changed>` and commit drizzle/.',
      };
    }
    return { ok: true, message: 'schema and committed migrations agree' };
  } finally {
    rmSync(scratch, { recursive: true, force: true });
  }
}

if (isMain(import.meta.url)) {
  const log = prefixedLog('db:check');
  const { ok, message } = await checkMigrationsMatchSchema();
  log(message);
  process.exit(ok ? 0 : 1);
}
