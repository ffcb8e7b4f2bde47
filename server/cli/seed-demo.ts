// Seeds the demo line on first start (the database has no models yet) and makes sure the git-ignored
// .data/demo-station-key.json that `npm run station:sim` reads holds a valid key of the simulator's
// station: the key already in the file is kept while it is valid (so stations need no re-keying after
// a restart); a new one is made only when the file is missing or its key was revoked. `npm start` runs
// this after the server and the worker are up.
//
//   DATABASE_URL=postgres://… [DEMO_LINE_UNITS=2500] [DEMO_BASE_URL=http://localhost:3000] tsx server/cli/seed-demo.ts
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { dirname, join, relative, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { createDatabase } from '../db/client';
import { startJobQueue } from '#jobs/queue-client';
import { ensureDemoStationKey, seedDemoLine } from '../modules/demo/demo-line.seed';
import { demoSettings } from '../env';

const repoRoot = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');
// DEMO_KEY_FILE moves it (`npm test` does, so a test run never replaces the key of a developer's demo line).
const demo = demoSettings();
export const DEMO_KEY_FILE = demo.DEMO_KEY_FILE ?? join(repoRoot, '.data', 'demo-station-key.json');

/** The key in the key file, if the file holds one. */
function keyInFile(): string | undefined {
  if (!existsSync(DEMO_KEY_FILE)) return undefined;
  try {
    const parsed = JSON.parse(readFileSync(DEMO_KEY_FILE, 'utf8')) as { key?: unknown };
    return typeof parsed.key === 'string' ? parsed.key : undefined;
  } catch {
    return undefined;
  }
}

function say(line: string) {
  process.stdout.write(`${line}\n`);
}

const url = demo.DATABASE_URL;
if (!url) {
  process.stderr.write('DATABASE_URL is not set. `npm start` sets it for the private database.\n');
  process.exit(2);
}
const rawUnits = demo.DEMO_LINE_UNITS;
const count = Number(rawUnits);
if (!Number.isInteger(count) || count < 1 || count > 100_000) {
  process.stderr.write(
    `DEMO_LINE_UNITS="${rawUnits}" is not a whole number of units between 1 and 100000.\n`,
  );
  process.exit(2);
}
const baseUrl = demo.DEMO_BASE_URL;

// Demo history, written once: a crash loses at most the last few commits of it, and not waiting for
// the disk on each of the ~8,000 commits keeps the first start short.
const seedUrl = new URL(url);
seedUrl.searchParams.set('options', '-c synchronous_commit=off');
const database = createDatabase(seedUrl.toString(), { max: 10, applicationName: 'phasewright-seed' });
const queue = await startJobQueue(url, database.pool);
let code = 0;
try {
  const t0 = performance.now();
  let lastLine = t0;
  const report = await seedDemoLine(
    { db: database.db, pool: database.pool, queue, clock: () => new Date() },
    {
      units: count,
      timeZone: demo.PLANT_TIME_ZONE,
      onPhase(step, ms) {
        say(`demo line: ${step} done (${(ms / 1000).toFixed(1)} s)`);
      },
      onProgress(done, total) {
        const now = performance.now();
        if (done === total || now - lastLine > 2000) {
          say(`demo line: ${done} of ${total} units through the line (${((now - t0) / 1000).toFixed(1)} s)`);
          lastLine = now;
        }
      },
    },
  );
  if (report.seeded) {
    const c = report.calibrations;
    say(
      `demo line seeded in ${(report.ms / 1000).toFixed(1)} s: ${report.units} units, ${report.measurements} measurements, ` +
        `calibrations ${c.pass} pass / ${c.fail} fail / ${c.unusable} unusable, ${report.onHold} on hold, ` +
        `${report.confirmations} programming confirmations (${report.mismatches} mismatches), ` +
        `${report.firstComputedAt?.slice(0, 10)} to ${report.lastComputedAt?.slice(0, 10)}`,
    );
  } else {
    say('demo line: the database already has models; nothing seeded');
  }
  const key = await ensureDemoStationKey(database.db, new Date(), keyInFile());
  mkdirSync(dirname(DEMO_KEY_FILE), { recursive: true });
  writeFileSync(
    DEMO_KEY_FILE,
    JSON.stringify(
      {
        stationId: key.stationId,
        stationName: key.stationName,
        modelCode: key.modelCode,
        key: key.key,
        baseUrl,
      },
      null,
      2,
    ) + '\n',
    { mode: 0o600 },
  );
  if (key.kept) say(`demo station key for ${key.stationName} is still valid: kept`);
  else
    say(
      `demo station key for ${key.stationName} written to ${relative(repoRoot, DEMO_KEY_FILE) || DEMO_KEY_FILE}`,
    );
} catch (e) {
  process.stderr.write(`demo line: ${e instanceof Error ? e.message : String(e)}\n`);
  code = 1;
} finally {
  await queue.stop();
  await database.close();
}
process.exit(code);
