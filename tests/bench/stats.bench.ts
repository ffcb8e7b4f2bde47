// Line statistics benchmark: `npm run bench:stats`. Builds a bench database (the private "bench" PostgreSQL
// instance, port PGPORT_BENCH) with BENCH_STATS_ROWS calibrations (default 1,000,000) of one model across 6
// stations and 40 hall-board lots, generated inside PostgreSQL by set-based INSERT … SELECT over
// generate_series (no row-by-row inserts), then times each view's service call (query + maths, in this
// process, no HTTP) beside the bare SQL aggregate of the same data, the CSV export's rows per second, and the
// process's resident memory. The views answer from the rows kept in memory (calibration-store.ts) unless
// STATISTICS_IN_MEMORY=false: the first view's time (reading the model's rows into memory) and the time of a
// view right after new calibrations (catching up) are printed on their own, and so is each view's first run
// (cold code, a filter not selected before) ahead of its BENCH_STATS_RUNS timed runs (default 20). Prints
// figures; asserts nothing.
import { Writable } from 'node:stream';
import { mkdirSync, writeFileSync } from 'node:fs';
import { Session } from 'node:inspector/promises';
import { cpus, loadavg } from 'node:os';
import pg from 'pg';
import { spawn } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { API_NODE_FLAGS, TSX } from '#server/ops/services.mjs';
import { ensurePostgres } from '#server/ops/pg-local.mjs';
import { prefixedLog } from '#server/ops/proc.mjs';
import { createDatabase } from '#server/db/client';
import { runMigrations } from '#server/db/migrate';
import { createDemoCatalog } from '#server/modules/demo/demo-line.seed';
import { createStation } from '#server/modules/stations/stations.service';
import { comparisonView, distributionView } from '#server/modules/analysis/analysis.service';
import { controlChartView } from '#server/modules/analysis/control-chart.service';
import { writeCalibrationsCsv } from '#server/modules/analysis/analysis.export';
import { useCalibrationStore } from '#server/modules/read-models/calibration-store';
import { parseEnv } from '#server/env';
import {
  analysisFilterSchema,
  comparisonQuerySchema,
  controlChartQuerySchema,
} from '#shared/schemas/analysis';

process.env.PGPORT_BENCH ??= '55437';
const ROWS = Number(process.env.BENCH_STATS_ROWS ?? 1_000_000);
const RUNS = Number(process.env.BENCH_STATS_RUNS ?? 20);
const DB_NAME = 'phasewright_bench_stats';
const KEEP = process.env.BENCH_STATS_KEEP === '1';
/** BENCH_STATS_PROFILE=dir writes a CPU profile of each view's timed runs there (open in chromium's DevTools). */
const PROFILE_DIR = process.env.BENCH_STATS_PROFILE;

let peakRssMb = 0;
/** The peak since the last look (each stage's own peak is printed beside it). */
let stagePeakMb = 0;
function stagePeak() {
  const peak = stagePeakMb;
  stagePeakMb = process.memoryUsage().rss / 2 ** 20;
  return peak.toFixed(0);
}
const sampler = setInterval(() => {
  const rss = process.memoryUsage().rss / 2 ** 20;
  peakRssMb = Math.max(peakRssMb, rss);
  stagePeakMb = Math.max(stagePeakMb, rss);
}, 50);

function quantile(xs: number[], p: number) {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.floor(p * (s.length - 1) + 0.5))];
}

/** Wall time of each run, and this process's CPU time (user + system) of each; `before` runs untimed. */
async function timed(
  runs: number,
  fn: () => Promise<unknown>,
  before?: () => Promise<unknown>,
  profileAs?: string,
) {
  const ms: number[] = [];
  const cpu: number[] = [];
  stagePeak();
  // One run first, timed on its own: it compiles the view's code and selects a filter seen for the first
  // time (an API process serving engineers all day answers from warm code and known filters).
  await before?.();
  const f0 = performance.now();
  await fn();
  const first = performance.now() - f0;
  const session = PROFILE_DIR && profileAs ? new Session() : null;
  if (session) {
    session.connect();
    await session.post('Profiler.enable');
    await session.post('Profiler.start');
  }
  for (let i = 0; i < runs; i++) {
    await before?.();
    const c0 = process.cpuUsage();
    const t0 = performance.now();
    await fn();
    ms.push(performance.now() - t0);
    const c = process.cpuUsage(c0);
    cpu.push((c.user + c.system) / 1000);
  }
  if (session) {
    const { profile } = await session.post('Profiler.stop');
    mkdirSync(PROFILE_DIR!, { recursive: true });
    writeFileSync(`${PROFILE_DIR}/${profileAs}.cpuprofile`, JSON.stringify(profile));
    session.disconnect();
  }
  return {
    first,
    p50: quantile(ms, 0.5),
    p95: quantile(ms, 0.95),
    cpu50: quantile(cpu, 0.5),
    peakMb: stagePeak(),
  };
}

/**
 * One new station result of the benchmark's model, as a running line adds them: before each timed view, so
 * no view is answered from what the previous one computed (the rows kept in memory catch up first).
 */
async function oneMoreCalibration(pool: pg.Pool) {
  await pool.query(
    `insert into calibrations (measurement_pk, recipe_id, unit_id, station_id, engine_version, verdict, purpose,
                               offset_deg, offset_counts, attempt, result, compute_ms)
     select measurement_pk, recipe_id, unit_id, station_id, $1, verdict, purpose, offset_deg, offset_counts,
            attempt, result, compute_ms
     from calibrations where engine_version = 'bench' order by computed_at desc limit 1`,
    [`live-${Date.now()}-${Math.random().toString(36).slice(2)}`],
  );
}

/** Seeds ROWS calibrations of one model over 6 stations and 40 lots, set-based inside PostgreSQL. */
async function seed(database: ReturnType<typeof createDatabase>) {
  const { db, pool } = database;
  await createDemoCatalog(db, null, new Date('2026-01-01T00:00:00Z'));
  const { rows: modelRows } = await pool.query<{ id: string; active_recipe_id: string }>(
    `select id, active_recipe_id from models order by code limit 1`,
  );
  const model = modelRows[0];
  const stationIds: string[] = [];
  for (let i = 1; i <= 6; i++)
    stationIds.push(
      (await createStation(db, null, { name: `BENCH-${i}`, line: 'Bench', allowedModelIds: [model.id] })).id,
    );

  const t0 = performance.now();
  await pool.query(
    `insert into units (serial, model_id, hall_board_lot, magnet_ring_lot, stator_lot, status, attempts)
     select 'BN' || i, $1, 'HB-' || lpad((i % 40)::text, 2, '0'), 'MR-' || (i % 7), 'ST-' || (i % 5), 'calibrated', 1
     from generate_series(1, $2::int) i`,
    [model.id, ROWS],
  );
  await pool.query(
    `insert into measurements (measurement_id, station_id, unit_id, serial, source, payload, payload_raw, payload_sha256, received_at)
     select 'm-' || u.serial, ($1::uuid[])[(substr(u.serial, 3)::int % 6) + 1], u.id, u.serial, 'timings', '{}'::jsonb, '{}', 'bench',
            timestamptz '2026-11-01' + substr(u.serial, 3)::int * interval '2 seconds'
     from units u where u.model_id = $2`,
    [stationIds, model.id],
  );
  await pool.query(
    `insert into calibrations (measurement_pk, recipe_id, unit_id, station_id, engine_version, verdict, purpose,
                               offset_deg, offset_counts, attempt, result, compute_ms, computed_at)
     select m.id, $1, m.unit_id, m.station_id, 'bench', 'pass', 'station', o.v, 0, 1,
            jsonb_build_object('verdict', 'pass', 'offsetDeg', o.v, 'speedRpm', 3000, 'fitResidualDeg', 0.2,
              'lagDeg', 0.4, 'sensors', jsonb_build_array(
                jsonb_build_object('sensor', 'A', 'placementDeg', 0.1), jsonb_build_object('sensor', 'B', 'placementDeg', -0.1),
                jsonb_build_object('sensor', 'C', 'placementDeg', 0.0)),
              'checks', '[]'::jsonb),
            1, m.received_at
     from measurements m
     join units u on u.id = m.unit_id
     -- The lateral names the row, so each calibration draws its own value (about normal, sd 1.1°, from four
     -- uniforms); hall-board lot HB-07 sits 4° off, as a bad lot would.
     cross join lateral (select 2.4 + case when u.hall_board_lot = 'HB-07' then 4 else 0 end
                               + 1.1 * (random() + random() + random() + random() - 2) * 1.732 as v
                         where m.id is not null) o`,
    [model.active_recipe_id],
  );
  // As autovacuum leaves an append-only table in production (it vacuums after inserts): visibility map
  // set, statistics fresh.
  await pool.query('vacuum analyze');
  const seedS = (performance.now() - t0) / 1000;
  console.log(
    `seeded ${ROWS.toLocaleString('en')} calibrations in ${seedS.toFixed(1)} s (set-based INSERT … SELECT)`,
  );
}

/**
 * What the statistics trigger adds to each calibration insert: single-row inserts (as a station's commit
 * makes them) alternately with the trigger enabled and disabled, 1,000 per round; mean ms per insert.
 * The rows are recomputations under their own engine versions, so they do not touch the views' data.
 */
async function triggerCost(pool: pg.Pool, recipeId: string) {
  const client = await pool.connect();
  const per = { with: [] as number[], without: [] as number[] };
  try {
    const { rows } = await client.query<{ id: string; unit_id: string; station_id: string }>(
      `select id, unit_id, station_id from measurements order by received_at limit 1000`,
    );
    const tag = Date.now().toString(36);
    for (let round = 0; round < 5; round++)
      for (const on of [true, false]) {
        await client.query(
          `alter table calibrations ${on ? 'enable' : 'disable'} trigger calibrations_stats`,
        );
        const t0 = performance.now();
        for (const m of rows)
          await client.query(
            `insert into calibrations (measurement_pk, recipe_id, unit_id, station_id, engine_version, verdict,
                                       purpose, offset_deg, offset_counts, attempt, result, compute_ms)
             values ($1, $2, $3, $4, $5, 'pass', 'recompute', 2.5, 0, null,
                     '{"verdict":"pass","offsetDeg":2.5,"lagDeg":0.4,"speedRpm":3000,"fitResidualDeg":0.2,"sensors":[{"sensor":"A","placementDeg":0.1},{"sensor":"B","placementDeg":-0.1},{"sensor":"C","placementDeg":0}],"checks":[]}', 1)`,
            [m.id, recipeId, m.unit_id, m.station_id, `tc-${tag}-${round}-${on ? 'on' : 'off'}`],
          );
        per[on ? 'with' : 'without'].push((performance.now() - t0) / rows.length);
      }
  } finally {
    await client.query(`alter table calibrations enable trigger calibrations_stats`);
    client.release();
  }
  const mean = (xs: number[]) => xs.reduce((a, b) => a + b, 0) / xs.length;
  console.log(
    `single-row calibration insert, mean of 5 × 1,000: ${mean(per.with).toFixed(3)} ms with the statistics trigger, ${mean(per.without).toFixed(3)} ms without (${(mean(per.with) - mean(per.without)).toFixed(3)} ms added; rounds with ${per.with.map((x) => x.toFixed(3)).join(' / ')}, without ${per.without.map((x) => x.toFixed(3)).join(' / ')})`,
  );
}

async function main() {
  const handle = await ensurePostgres({ instance: 'bench', log: prefixedLog('postgres') });
  try {
    const admin = new pg.Client({ connectionString: handle.adminUrl });
    await admin.connect();
    // BENCH_STATS_KEEP=1 keeps the database of an earlier run with the same row count (for iterating on
    // the views; migrations still run).
    const kept =
      KEEP && (await admin.query(`select 1 from pg_database where datname = $1`, [DB_NAME])).rows.length > 0;
    if (!kept) {
      await admin.query(`drop database if exists "${DB_NAME}" with (force)`);
      await admin.query(`create database "${DB_NAME}"`);
    }
    await admin.end();
    const url = new URL(handle.adminUrl);
    url.pathname = `/${DB_NAME}`;
    const database = createDatabase(url.toString(), { max: 4 });
    const { db, pool } = database;
    await runMigrations(db);
    const { rows: seededRows } = await pool.query<{ n: string }>(
      `select count(*) as n from calibrations where engine_version = 'bench'`,
    );
    if (!kept || Number(seededRows[0].n) !== ROWS) {
      if (kept)
        throw new Error(
          `the kept database has ${seededRows[0].n} rows, not ${ROWS}: run without BENCH_STATS_KEEP`,
        );
      await seed(database);
    } else console.log(`kept ${ROWS.toLocaleString('en')} calibrations from an earlier run`);
    const { rows: modelRows } = await pool.query<{ id: string; active_recipe_id: string }>(
      `select id, active_recipe_id from models order by code limit 1`,
    );
    const model = modelRows[0];
    const { rows: stationRows } = await pool.query<{ id: string }>(
      `select id from stations where name like 'BENCH-%' order by name`,
    );
    const stationIds = stationRows.map((r) => r.id);
    console.log(
      `load average (1 / 5 / 15 min) before the views: ${loadavg()
        .map((x) => x.toFixed(2))
        .join(' / ')}`,
    );

    const filter = analysisFilterSchema.parse({ model: model.id });
    const station = stationIds[0];
    const inMemory = parseEnv({ ...process.env, DATABASE_URL: handle.adminUrl }).STATISTICS_IN_MEMORY;
    useCalibrationStore(inMemory);
    if (inMemory) {
      const rss0 = process.memoryUsage().rss / 2 ** 20;
      stagePeak();
      const c0 = performance.now();
      await distributionView(db, filter);
      console.log(
        `first view since start (reads the model's ${ROWS.toLocaleString('en')} rows into memory): ${((performance.now() - c0) / 1000).toFixed(1)} s, RSS ${rss0.toFixed(0)} → ${(process.memoryUsage().rss / 2 ** 20).toFixed(0)} MB (peak ${stagePeak()} MB)`,
      );
    } else console.log('STATISTICS_IN_MEMORY=false: every view is one SQL statement');
    const rows: [
      string,
      { first: number; p50: number; p95: number; cpu50: number; peakMb: string },
      { p50: number; p95: number },
    ][] = [];

    rows.push([
      'distribution + capability, all rows',
      await timed(
        RUNS,
        () => distributionView(db, filter),
        () => oneMoreCalibration(pool),
        'distribution',
      ),
      await timed(RUNS, () =>
        pool.query(
          `select count(*), avg(offset_deg), stddev_samp(offset_deg), min(offset_deg), max(offset_deg)
           from calibration_stats where model_id = $1 and purpose = 'station' and verdict in ('pass', 'fail')
             and offset_deg is not null`,
          [model.id],
        ),
      ),
    ]);
    const chartQuery = controlChartQuerySchema.parse({
      model: model.id,
      stations: station,
      chart: 'imr',
      limit: 10000,
    });
    rows.push([
      'I-MR, one station, last 10,000, rules',
      await timed(
        RUNS,
        () => controlChartView(db, chartQuery),
        () => oneMoreCalibration(pool),
        'chart',
      ),
      await timed(RUNS, () =>
        pool.query(
          `select calibration_id, unit_id, serial, computed_at, offset_deg from calibration_stats
           where station_id = $1 and model_id = $2 and purpose = 'station' and verdict in ('pass', 'fail')
             and offset_deg is not null
           order by computed_at desc, calibration_id desc limit 10000`,
          [station, model.id],
        ),
      ),
    ]);
    const cmp = comparisonQuerySchema.parse({ model: model.id, by: 'hallBoardLot' });
    rows.push([
      'comparison by hall-board lot, all rows',
      await timed(
        RUNS,
        () => comparisonView(db, cmp),
        () => oneMoreCalibration(pool),
        'comparison',
      ),
      await timed(RUNS, () =>
        pool.query(
          `select hall_board_lot, count(*), avg(offset_deg), stddev_samp(offset_deg)
           from calibration_stats where model_id = $1 and purpose = 'station' and verdict in ('pass', 'fail')
             and offset_deg is not null
           group by 1`,
          [model.id],
        ),
      ),
    ]);
    if (inMemory)
      for (const count of [100, 1000]) {
        // New station results of the same model, as a busy line adds them between two looks.
        await pool.query(
          `insert into calibrations (measurement_pk, recipe_id, unit_id, station_id, engine_version, verdict, purpose,
                                     offset_deg, offset_counts, attempt, result, compute_ms)
           select measurement_pk, recipe_id, unit_id, station_id, $1, verdict, purpose, offset_deg, offset_counts,
                  attempt, result, compute_ms
           from calibrations where engine_version = 'bench' order by computed_at desc limit $2`,
          [`catch-up-${Date.now()}`, count],
        );
        const c0 = performance.now();
        await distributionView(db, filter);
        console.log(
          `distribution right after ${count.toLocaleString('en')} new calibrations (catching up first): ${(performance.now() - c0).toFixed(0)} ms`,
        );
      }
    const load = () =>
      loadavg()
        .map((x) => x.toFixed(2))
        .join(' / ');
    console.log(`load average (1 / 5 / 15 min) after the views: ${load()} on ${cpus().length} cores`);
    console.log(
      'view (a new calibration before each run) | first run ms | p50 ms | p95 ms | CPU p50 ms (this process) | peak RSS MB | target p95 | bare SQL p50 ms | bare SQL p95 ms | p95 ratio | target ratio',
    );
    for (const [name, view, bare] of rows)
      console.log(
        `${name} | ${view.first.toFixed(0)} | ${view.p50.toFixed(0)} | ${view.p95.toFixed(0)} | ${view.cpu50.toFixed(0)} | ${view.peakMb} | ≤ 300 ms ${view.p95 <= 300 ? 'met' : 'MISSED'} | ${bare.p50.toFixed(0)} | ${bare.p95.toFixed(0)} | ${(view.p95 / bare.p95).toFixed(1)}× | ≤ 2× ${view.p95 <= 2 * bare.p95 ? 'met' : 'MISSED'}`,
      );

    let bytes = 0;
    const sink = new Writable({
      write(chunk, _enc, cb) {
        bytes += chunk.length;
        cb();
      },
    });
    stagePeak();
    const e0 = performance.now();
    const exported = await writeCalibrationsCsv(pool, filter, sink);
    const es = (performance.now() - e0) / 1000;
    const rate = Math.round(exported / es);
    console.log(
      `CSV export: ${exported.toLocaleString('en')} rows, ${(bytes / 2 ** 20).toFixed(0)} MB in ${es.toFixed(1)} s = ${rate.toLocaleString('en')} rows/s (peak RSS ${stagePeak()} MB) | target ≥ 50,000 rows/s ${rate >= 50_000 ? 'met' : 'MISSED'}`,
    );
    console.log(
      `peak RSS of this process (the services run in it, as in the API process, with its V8 flags ${API_NODE_FLAGS.join(' ')}): ${peakRssMb.toFixed(0)} MB | target ≤ 300 MB ${peakRssMb <= 300 ? 'met' : 'MISSED'}`,
    );
    if (process.env.BENCH_STATS_TRIGGER !== '0') await triggerCost(pool, model.active_recipe_id);
    console.log(`load average (1 / 5 / 15 min) at the end: ${load()}`);
    await database.close();
  } finally {
    clearInterval(sampler);
    if (handle.startedByUs) await handle.stop();
  }
}

// The views run in this process as in an API process, so with the API process's V8 heap settings: without them,
// start again with them.
if (API_NODE_FLAGS.every((f) => process.execArgv.includes(f))) await main();
else {
  clearInterval(sampler);
  const child = spawn(TSX, [...API_NODE_FLAGS, fileURLToPath(import.meta.url)], { stdio: 'inherit' });
  const code = await new Promise<number | null>((done) => child.on('exit', done));
  process.exitCode = code ?? 1;
}
