// `npm run bench:whatif`: measurements replayed per second by one what-if run on one worker, over
// 10,000 stored measurements (one per unit), and the process's peak memory during the run.
// It starts (or reuses) the private benchmark PostgreSQL (PGPORT_BENCH, default 55437), creates a
// fresh database with the real migrations, stores the measurements with the station calibrations the
// version in force gave them, and runs the what-if service as the worker's job does.
import { randomUUID } from 'node:crypto';
import { availableParallelism, loadavg } from 'node:os';
import pg from 'pg';
import { ensurePostgres } from '../../server/ops/pg-local.mjs';
import { prefixedLog } from '../../server/ops/proc.mjs';
import { createDatabase } from '../../server/db/client';
import { runMigrations } from '../../server/db/migrate';
import { seedDemoAccounts } from '../../server/db/seed';
import { createLineFixture } from '../../tests/harness/line-fixtures';
import { simulatedMeasurement } from '../../tests/harness/measurements';
import { calibrate, ENGINE_VERSION } from '../../shared/calibration';
import { insertRecipeRow, insertWhatIfRun } from '../../server/modules/recipes/recipes.repository';
import { runWhatIf, WHAT_IF_BATCH } from '../../server/modules/recipes/what-if.service';

process.env.PGPORT_BENCH ??= '55437';
const MEASUREMENTS = Number(process.env.BENCH_WHATIF_MEASUREMENTS ?? 10_000);
/** Distinct simulated bodies, cycled (each stored row still has its own id, serial and unit). */
const DISTINCT = 1000;
const DB_NAME = 'phasewright_bench_whatif';
const log = prefixedLog('bench:whatif');

async function main() {
  log(`${availableParallelism()} cores, load average ${loadavg()[0].toFixed(2)} at start`);
  const pgHandle = await ensurePostgres({ instance: 'bench', log: prefixedLog('postgres') });
  const admin = new pg.Client({ connectionString: pgHandle.adminUrl });
  await admin.connect();
  await admin.query(`drop database if exists "${DB_NAME}" with (force)`);
  await admin.query(`create database "${DB_NAME}"`);
  await admin.end();
  const url = new URL(pgHandle.adminUrl);
  url.pathname = `/${DB_NAME}`;
  const database = createDatabase(url.toString(), { max: 4, applicationName: 'phasewright-bench' });
  try {
    await runMigrations(database.db);
    await seedDemoAccounts(database.db, 10);
    const line = await createLineFixture(database.db, { code: 'BW-1' });
    const recipe = line.recipe.body;

    const t0 = performance.now();
    let bodies = Array.from({ length: DISTINCT }, (_, i) =>
      simulatedMeasurement(recipe, `BODY-${i}`, { offsetDeg: -14 + (28 * i) / DISTINCT, seed: i + 1 }),
    );
    let results = bodies.map((b) => calibrate(b, recipe));
    log(`simulated ${DISTINCT} distinct measurements in ${((performance.now() - t0) / 1000).toFixed(1)} s`);

    const t1 = performance.now();
    const { rows: users } = await database.pool.query<{ id: string }>(
      `select id from users where username = 'evan.engineer'`,
    );
    for (let start = 0; start < MEASUREMENTS; start += 250) {
      const n = Math.min(250, MEASUREMENTS - start);
      const serials = Array.from({ length: n }, (_, k) => `BW-${String(start + k).padStart(6, '0')}`);
      const { rows: units } = await database.pool.query<{ id: string; serial: string }>(
        `insert into units (serial, model_id) select s, $2 from unnest($1::text[]) s returning id, serial`,
        [serials, line.model.id],
      );
      const rows = units.map((u, k) => {
        const i = (start + k) % DISTINCT;
        const body = { ...bodies[i], measurementId: randomUUID(), serial: u.serial };
        return { u, body, result: results[i], at: new Date(Date.UTC(2026, 10, 1) + (start + k) * 60_000) };
      });
      const { rows: ms } = await database.pool.query<{ id: string; measurement_id: string }>(
        `insert into measurements (measurement_id, station_id, unit_id, serial, source, payload, payload_raw, payload_sha256, received_at)
         select x.mid, $1, x.uid, x.serial, 'timings', x.body::jsonb, x.body, md5(x.body), x.at
           from unnest($2::text[], $3::uuid[], $4::text[], $5::text[], $6::timestamptz[]) as x(mid, uid, serial, body, at)
         returning id, measurement_id`,
        [
          line.station.id,
          rows.map((r) => r.body.measurementId),
          rows.map((r) => r.u.id),
          rows.map((r) => r.u.serial),
          rows.map((r) => JSON.stringify(r.body)),
          rows.map((r) => r.at),
        ],
      );
      const pk = new Map(ms.map((m) => [m.measurement_id, m.id]));
      await database.pool.query(
        `insert into calibrations (measurement_pk, recipe_id, unit_id, station_id, engine_version, verdict, purpose,
                                   offset_deg, attempt, result, computed_at)
         select x.pk, $1, x.uid, $2, $3, x.verdict::calibration_verdict, 'station', x.off, 1, x.result::jsonb, x.at
           from unnest($4::uuid[], $5::uuid[], $6::text[], $7::float8[], $8::text[], $9::timestamptz[])
             as x(pk, uid, verdict, off, result, at)`,
        [
          line.recipe.id,
          line.station.id,
          ENGINE_VERSION,
          rows.map((r) => pk.get(r.body.measurementId)),
          rows.map((r) => r.u.id),
          rows.map((r) => r.result.verdict),
          rows.map((r) => r.result.offsetDeg),
          rows.map((r) => JSON.stringify(r.result)),
          rows.map((r) => r.at),
        ],
      );
    }
    log(
      `stored ${MEASUREMENTS} measurements with their station calibrations in ${((performance.now() - t1) / 1000).toFixed(1)} s`,
    );

    // The draft: the released recipe with a narrower offset window.
    const draft = await insertRecipeRow(database.db, {
      modelId: line.model.id,
      version: 2,
      status: 'draft',
      body: { ...recipe, limits: { ...recipe.limits, offsetDeg: [-6, 6] } },
      createdBy: users[0].id,
    });
    const run = await insertWhatIfRun(database.db, {
      recipeId: draft.id,
      baselineRecipeId: line.recipe.id,
      modelId: line.model.id,
      filters: { lastUnits: MEASUREMENTS },
      requestedBy: users[0].id,
    });
    // Only the run's own memory should count: drop the generated data first.
    bodies = [];
    results = [];
    const rssBefore = process.memoryUsage().rss;
    let peakRss = rssBefore;
    let peakHeap = process.memoryUsage().heapUsed;
    const sampler = setInterval(() => {
      const m = process.memoryUsage();
      peakRss = Math.max(peakRss, m.rss);
      peakHeap = Math.max(peakHeap, m.heapUsed);
    }, 20);
    const t2 = performance.now();
    const done = await runWhatIf({ db: database.db, pool: database.pool, clock: () => new Date() }, run.id);
    const seconds = (performance.now() - t2) / 1000;
    clearInterval(sampler);
    const m = process.memoryUsage();
    peakRss = Math.max(peakRss, m.rss);
    peakHeap = Math.max(peakHeap, m.heapUsed);
    if (done?.status !== 'done' || done.processed !== MEASUREMENTS) {
      throw new Error(
        `the run ended ${done?.status} after ${done?.processed} of ${MEASUREMENTS} measurements`,
      );
    }
    const s = done.summary!;
    const mb = (b: number) => `${(b / 1024 / 1024).toFixed(0)} MB`;
    console.log('');
    console.log(`what-if replay, one worker, batches of ${WHAT_IF_BATCH}`);
    console.log(`  measurements replayed:  ${MEASUREMENTS} in ${seconds.toFixed(2)} s`);
    console.log(`  replayed per second:    ${Math.round(MEASUREMENTS / seconds)} /s (target ≥ 2,000 /s)`);
    console.log(
      `  peak memory (RSS):      ${mb(peakRss)} during the run, ${mb(rssBefore)} before it (target ≤ 300 MB)`,
    );
    console.log(`  peak JS heap used:      ${mb(peakHeap)}`);
    console.log(
      `  verdicts: ${s.passToFail} pass → fail, ${s.failToPass} fail → pass, ${s.unchanged} unchanged`,
    );
  } finally {
    await database.close();
    if (pgHandle.startedByUs) await pgHandle.stop();
  }
}

main().catch((e: unknown) => {
  console.error(e);
  process.exitCode = 1;
});
