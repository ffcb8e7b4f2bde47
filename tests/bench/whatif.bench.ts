// `npm run bench:whatif`: measurements replayed per second by one what-if run on one worker, over
// 10,000 stored measurements (one per unit), and the process's peak memory during the run and overall.
// It starts (or reuses) the private benchmark PostgreSQL (PGPORT_BENCH, default 55437), creates a
// fresh database with the real migrations, stores the measurements with the station calibrations the
// version in force gave them (1,000 simulated, the rest copied by the database, so the set-up holds
// little memory), and runs the what-if service as the worker's job does. Profile it with
// `node --cpu-prof --import tsx tests/bench/whatif.bench.ts`.
import { randomUUID } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { availableParallelism, loadavg } from 'node:os';
import pg from 'pg';
import { ensurePostgres } from '#server/ops/pg-local.mjs';
import { prefixedLog } from '#server/ops/proc.mjs';
import { createDatabase } from '#server/db/client';
import { runMigrations } from '#server/db/migrate';
import { seedDemoAccounts } from '#server/db/seed';
import { createLineFixture } from '#tests/harness/line-fixtures';
import { simulatedMeasurement } from '#tests/harness/measurements';
import { calibrate, ENGINE_VERSION } from '#shared/calibration';
import { insertRecipeRow, insertWhatIfRun } from '#server/modules/recipes/recipes.repository';
import { runWhatIf, WHAT_IF_BATCH } from '#server/modules/recipes/what-if.service';

process.env.PGPORT_BENCH ??= '55437';
const MEASUREMENTS = Number(process.env.BENCH_WHATIF_MEASUREMENTS ?? 10_000);
/** Distinct simulated bodies, cycled (each stored row still has its own id, serial and unit). */
const DISTINCT = 1000;
const DB_NAME = 'phasewright_bench_whatif';
const log = prefixedLog('bench:whatif');
/** Measurement i arrives one minute after measurement i − 1. */
const receivedAt = (i: number) => new Date(Date.UTC(2026, 10, 1) + i * 60_000);

/** The highest resident memory of the whole process, set-up included (Linux: VmHWM). */
function peakRssOfProcess(): number | null {
  try {
    const m = /VmHWM:\s+(\d+) kB/.exec(readFileSync('/proc/self/status', 'utf8'));
    return m ? Number(m[1]) * 1024 : null;
  } catch {
    return null;
  }
}

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

    // The set-up streams too, so the peak memory reported is the run's: DISTINCT simulated bodies are
    // made and stored 250 at a time, and the other measurements are copies made by the database itself.
    const { rows: users } = await database.pool.query<{ id: string }>(
      `select id from users where username = 'evan.engineer'`,
    );
    const t1 = performance.now();
    const CHUNK = 100;
    const stored = Math.min(DISTINCT, MEASUREMENTS);
    for (let start = 0; start < stored; start += CHUNK) {
      const n = Math.min(CHUNK, stored - start);
      const rows = Array.from({ length: n }, (_, k) => {
        const i = start + k;
        const serial = `BW-${String(i).padStart(6, '0')}`;
        const body = {
          ...simulatedMeasurement(recipe, serial, { offsetDeg: -14 + (28 * i) / DISTINCT, seed: i + 1 }),
          measurementId: randomUUID(),
          serial,
        };
        return { serial, body, result: calibrate(body, recipe), at: receivedAt(i) };
      });
      const { rows: units } = await database.pool.query<{ id: string; serial: string }>(
        `insert into units (serial, model_id) select s, $2 from unnest($1::text[]) s returning id, serial`,
        [rows.map((r) => r.serial), line.model.id],
      );
      const unitOf = new Map(units.map((u) => [u.serial, u.id]));
      const { rows: ms } = await database.pool.query<{ id: string; measurement_id: string }>(
        `insert into measurements (measurement_id, station_id, unit_id, serial, source, payload, payload_raw, payload_sha256, received_at)
         select x.mid, $1, x.uid, x.serial, 'timings', x.body::jsonb, x.body, md5(x.body), x.at
           from unnest($2::text[], $3::uuid[], $4::text[], $5::text[], $6::timestamptz[]) as x(mid, uid, serial, body, at)
         returning id, measurement_id`,
        [
          line.station.id,
          rows.map((r) => r.body.measurementId),
          rows.map((r) => unitOf.get(r.serial)),
          rows.map((r) => r.serial),
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
          rows.map((r) => unitOf.get(r.serial)),
          rows.map((r) => r.result.verdict),
          rows.map((r) => r.result.offsetDeg),
          rows.map((r) => JSON.stringify(r.result)),
          rows.map((r) => r.at),
        ],
      );
    }
    log(`simulated and stored ${stored} distinct measurements in ${((performance.now() - t1) / 1000).toFixed(1)} s`);

    // Measurement i (i ≥ DISTINCT) is a copy of measurement i mod DISTINCT with its own unit, serial,
    // measurement id and time, and the same station calibration; copied in SQL, 1,000 at a time.
    const t2 = performance.now();
    for (let start = stored; start < MEASUREMENTS; start += 1000) {
      const end = Math.min(MEASUREMENTS, start + 1000);
      await database.pool.query(
        `with n as (
           select i, 'BW-' || lpad(i::text, 6, '0') as serial, 'BW-' || lpad((i % $3)::text, 6, '0') as template,
                  $4::timestamptz + make_interval(mins => i) as at, gen_random_uuid()::text as mid
             from generate_series($1::int, $2::int - 1) i),
         u as (insert into units (serial, model_id) select serial, $5 from n returning id, serial),
         src as (
           select n.*, u.id as uid, t.station_id, t.payload || jsonb_build_object('measurementId', n.mid, 'serial', n.serial) as body,
                  c.recipe_id, c.engine_version, c.verdict, c.offset_deg, c.result
             from n join u on u.serial = n.serial
             join measurements t on t.serial = n.template
             join calibrations c on c.measurement_pk = t.id and c.purpose = 'station'),
         m as (
           insert into measurements (measurement_id, station_id, unit_id, serial, source, payload, payload_raw, payload_sha256, received_at)
           select mid, station_id, uid, serial, 'timings', body, body::text, md5(body::text), at from src
           returning id, measurement_id)
         insert into calibrations (measurement_pk, recipe_id, unit_id, station_id, engine_version, verdict, purpose,
                                   offset_deg, attempt, result, computed_at)
         select m.id, src.recipe_id, src.uid, src.station_id, src.engine_version, src.verdict, 'station',
                src.offset_deg, 1, src.result, src.at
           from m join src on src.mid = m.measurement_id`,
        [start, end, DISTINCT, receivedAt(0), line.model.id],
      );
    }
    log(
      `copied them into ${MEASUREMENTS} stored measurements with their station calibrations in ${((performance.now() - t2) / 1000).toFixed(1)} s`,
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
    const rssBefore = process.memoryUsage().rss;
    let peakRss = rssBefore;
    let peakHeap = process.memoryUsage().heapUsed;
    const sampler = setInterval(() => {
      const m = process.memoryUsage();
      peakRss = Math.max(peakRss, m.rss);
      peakHeap = Math.max(peakHeap, m.heapUsed);
    }, 20);
    const loadBefore = loadavg()[0];
    const tRun = performance.now();
    const done = await runWhatIf({ db: database.db, pool: database.pool, clock: () => new Date() }, run.id);
    const seconds = (performance.now() - tRun) / 1000;
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
    const rate = Math.round(MEASUREMENTS / seconds);
    const wholePeak = peakRssOfProcess();
    const verdict = (ok: boolean) => (ok ? 'met' : 'NOT met');
    console.log(
      `  replayed per second:    ${rate} /s (target ≥ 2,000 /s: ${verdict(rate >= 2000)})`,
    );
    console.log(
      `  peak memory (RSS):      ${mb(peakRss)} during the run, ${mb(rssBefore)} before it (target ≤ 300 MB: ${verdict(peakRss <= 300 * 1024 * 1024)})`,
    );
    if (wholePeak !== null) {
      console.log(
        `  peak RSS, whole bench:  ${mb(wholePeak)} including the set-up (target ≤ 300 MB: ${verdict(wholePeak <= 300 * 1024 * 1024)})`,
      );
    }
    console.log(`  peak JS heap used:      ${mb(peakHeap)}`);
    console.log(
      `  verdicts: ${s.passToFail} pass → fail, ${s.failToPass} fail → pass, ${s.unchanged} unchanged`,
    );
    console.log(
      `  machine: ${availableParallelism()} cores, load average ${loadBefore.toFixed(2)} before the run, ${loadavg()[0].toFixed(2)} after it (shared machine: compare runs at similar load)`,
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
