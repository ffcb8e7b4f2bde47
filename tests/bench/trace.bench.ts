// Traceability benchmark: `npm run bench:trace`. Builds a bench database (the private "bench" PostgreSQL
// instance, port PGPORT_BENCH) with BENCH_TRACE_UNITS units (default 1,000,000) over 6 stations, 40
// hall-board lots and 30 days, one station measurement each and a second attempt for every fifth unit
// (1.2 M calibrations), generated inside PostgreSQL by set-based INSERT … SELECT over generate_series.
// Then times, through the services the routes call (no HTTP): a containment search by lot + time range +
// station (p50/p95), the unit record's API (unitDetail, p50/p95), and one bulk hold of 10,000 units; then
// the unit record (unitRecord) and its PDF and ZIP exports (benchUnitRecord, p50/p95).
// Prints figures with the load average; asserts nothing.
import os from 'node:os';
import pg from 'pg';
import { ensurePostgres } from '#server/ops/pg-local.mjs';
import { prefixedLog } from '#server/ops/proc.mjs';
import { createDatabase } from '#server/db/client';
import { runMigrations } from '#server/db/migrate';
import { createDemoCatalog } from '#server/modules/demo/demo-line.seed';
import { createStation } from '#server/modules/stations/stations.service';
import { unitDetail } from '#server/modules/units/units.service';
import { bulkHold, type QualityContext } from '#server/modules/quality/quality.service';
import { searchUnits } from '#server/modules/quality/containment-search.service';
import { createLogger } from '#server/lib/logger';
import { unitSearchQuerySchema } from '#shared/schemas/quality';
import { createHash } from 'node:crypto';
import type { Db } from '#server/db/client';
import { unitRecord } from '#server/modules/quality/unit-record.service';
import { exportUnitRecordPdf, exportUnitRecordZip } from '#server/modules/quality/unit-record.export';
import type { SessionUser } from '#server/lib/auth';
import { calibrate, ENGINE_VERSION } from '#shared/calibration';
import type { Recipe } from '#shared/schemas/recipe';
import { simulatedMeasurement } from '../harness/measurements';

process.env.PGPORT_BENCH ??= '55437';
const UNITS = Number(process.env.BENCH_TRACE_UNITS ?? 1_000_000);
const RUNS = Number(process.env.BENCH_TRACE_RUNS ?? 20);
const DB_NAME = 'phasewright_bench_trace';

function quantile(xs: number[], p: number) {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.floor(p * (s.length - 1) + 0.5))];
}

async function timed(runs: number, fn: (i: number) => Promise<unknown>) {
  const ms: number[] = [];
  for (let i = 0; i < runs; i++) {
    const t0 = performance.now();
    await fn(i);
    ms.push(performance.now() - t0);
  }
  return `p50 ${quantile(ms, 0.5).toFixed(1)} ms, p95 ${quantile(ms, 0.95).toFixed(1)} ms (${runs} runs)`;
}

async function main() {
  const handle = await ensurePostgres({ instance: 'bench', log: prefixedLog('postgres') });
  try {
    const admin = new pg.Client({ connectionString: handle.adminUrl });
    await admin.connect();
    await admin.query(`drop database if exists "${DB_NAME}" with (force)`);
    await admin.query(`create database "${DB_NAME}"`);
    await admin.end();
    const url = new URL(handle.adminUrl);
    url.pathname = `/${DB_NAME}`;
    const database = createDatabase(url.toString(), { max: 4 });
    const { db, pool } = database;
    await runMigrations(db);
    await createDemoCatalog(db, null, new Date('2026-01-01T00:00:00Z'));
    const { rows: modelRows } = await pool.query<{ id: string; active_recipe_id: string }>(
      `select id, active_recipe_id from models order by code limit 1`,
    );
    const model = modelRows[0];
    const stationIds: string[] = [];
    for (let i = 1; i <= 6; i++)
      stationIds.push(
        (await createStation(db, null, { name: `TRACE-${i}`, line: 'Bench', allowedModelIds: [model.id] }))
          .id,
      );
    const { rows: people } = await pool.query<{ id: string }>(
      `insert into users (username, display_name, role) values ('bench.quality', 'Bench Quality', 'quality') returning id`,
    );

    const t0 = performance.now();
    await pool.query(
      `insert into units (serial, model_id, hall_board_lot, magnet_ring_lot, stator_lot, status, attempts, created_at)
       select 'TR' || lpad(i::text, 7, '0'), $1, 'HB-' || lpad((i % 40)::text, 2, '0'), 'MR-' || (i % 7),
              'ST-' || (i % 5), 'calibrated', 1, timestamptz '2026-10-01' + i * interval '2.5 seconds'
         from generate_series(1, $2::int) i`,
      [model.id, UNITS],
    );
    await pool.query(
      `insert into measurements (measurement_id, station_id, unit_id, serial, source, payload, payload_raw, payload_sha256, received_at)
       select 'm-' || u.serial || '-' || a, ($1::uuid[])[(substr(u.serial, 3)::int % 6) + 1], u.id, u.serial, 'timings',
              '{}'::jsonb, '{}', 'bench', u.created_at + a * interval '1 minute'
         from units u cross join generate_series(1, 2) a
        where u.model_id = $2 and (a = 1 or substr(u.serial, 3)::int % 5 = 0)`,
      [stationIds, model.id],
    );
    await pool.query(
      `insert into calibrations (measurement_pk, recipe_id, unit_id, station_id, engine_version, verdict, purpose,
                                 offset_deg, offset_counts, attempt, result, compute_ms, computed_at)
       select m.id, $1, m.unit_id, m.station_id, 'bench', 'pass', 'station', o.v, 0, 1,
              jsonb_build_object('verdict', 'pass', 'offsetDeg', o.v, 'checks', '[]'::jsonb), 1, m.received_at
         from measurements m
        cross join lateral (select 2.4 + 1.1 * (random() + random() + random() + random() - 2) * 1.732 as v) o`,
      [model.active_recipe_id],
    );
    // A table a million rows long has been vacuumed by autovacuum long before anyone searches it (its
    // insert threshold is 20 % of the table); the set-up does so at once, so index-only scans find the
    // visibility map a running plant's database has.
    await pool.query('vacuum analyze units');
    await pool.query('vacuum analyze calibrations');
    await pool.query('analyze');
    const { rows: counted } = await pool.query<{ u: number; c: number }>(
      `select (select count(*)::int from units) as u, (select count(*)::int from calibrations) as c`,
    );
    console.log(
      `seeded ${counted[0].u.toLocaleString('en')} units and ${counted[0].c.toLocaleString('en')} calibrations in ` +
        `${((performance.now() - t0) / 1000).toFixed(1)} s (set-based INSERT … SELECT)`,
    );

    const lines: string[] = [];
    lines.push(
      `containment search, lot + 3-day range + station: ${await timed(RUNS, (i) =>
        searchUnits(
          db,
          unitSearchQuerySchema.parse({
            hallBoardLot: `HB-${String(i % 40).padStart(2, '0')}`,
            stationId: stationIds[i % 6],
            measuredFrom: new Date(Date.parse('2026-10-05T00:00:00Z') + i * 86_400_000).toISOString(),
            measuredTo: new Date(Date.parse('2026-10-08T00:00:00Z') + i * 86_400_000).toISOString(),
          }),
        ),
      )}`,
    );
    lines.push(
      `unit record API (unitDetail): ${await timed(RUNS, (i) =>
        unitDetail(db, `TR${String(1 + ((i * 48_271) % UNITS)).padStart(7, '0')}`),
      )}`,
    );
    const ctx: QualityContext = {
      db,
      clock: () => new Date(),
      mailer: { send: async () => {}, close: () => {} },
      logger: createLogger('silent'),
      publicUrl: 'http://bench.invalid',
    };
    const serials = Array.from(
      { length: Math.min(10_000, UNITS) },
      (_, i) => `TR${String(1 + i).padStart(7, '0')}`,
    );
    const h0 = performance.now();
    const held = await bulkHold(
      ctx,
      {
        id: people[0].id,
        username: 'bench.quality',
        displayName: 'Bench Quality',
        email: null,
        role: 'quality',
      },
      { serials, reason: 'Bench containment', newInvestigation: { title: 'Bench case' } },
    );
    lines.push(
      `bulk hold of ${serials.length.toLocaleString('en')} units (one transaction, audited per unit): ${((performance.now() - h0) / 1000).toFixed(2)} s (held ${held.held})`,
    );
    for (const l of lines) console.log(l);
    for (const l of await benchUnitRecord(
      db,
      pool,
      { recipeId: model.active_recipe_id, stationId: stationIds[0] },
      {
        id: people[0].id,
        username: 'bench.quality',
        displayName: 'Bench Quality',
        email: null,
        role: 'quality',
      },
    ))
      console.log(l);
    console.log(
      `load average (1/5/15 min): ${os
        .loadavg()
        .map((x) => x.toFixed(1))
        .join(' / ')}, ${os.cpus().length} cores`,
    );
    await database.close();
  } finally {
    if (handle.startedByUs) await handle.stop();
  }
}

// ---- The unit record and its exports (issue 13, "The unit record") ----------------------------------
// Units from the bulk-held range (a hold and audit entries) and from anywhere else each get one more,
// realistic station measurement: a simulated body posted as JSON, the engine's full result with its
// checks, and a confirmed programming write. Then, through the services the routes call: the record API
// (unitRecord), the PDF calibration record and the ZIP (PDF + raw files + SHA-256 manifest), each audited.
async function benchUnitRecord(
  db: Db,
  pool: pg.Pool,
  line: { recipeId: string; stationId: string },
  actor: SessionUser,
): Promise<string[]> {
  const { rows: recipeRows } = await pool.query<{ body: Recipe }>('select body from recipes where id = $1', [
    line.recipeId,
  ]);
  const recipe = recipeRows[0].body;
  const serials = Array.from({ length: RUNS }, (_, i) =>
    i % 2 === 0
      ? `TR${String(1 + ((i * 397) % Math.min(10_000, UNITS))).padStart(7, '0')}`
      : `TR${String(1 + ((i * 48_271) % UNITS)).padStart(7, '0')}`,
  );
  for (const [i, serial] of serials.entries()) {
    const m = simulatedMeasurement(recipe, serial, { offsetDeg: 2 + (i % 5), seed: i + 1 });
    const text = JSON.stringify(m);
    const result = calibrate(m, recipe);
    await pool.query(
      `with u as (select id from units where serial = $1),
            m as (insert into measurements (measurement_id, station_id, unit_id, serial, source, payload, payload_raw,
                                            payload_sha256, received_at)
                  select $2, $3, u.id, $1, 'timings', $4::jsonb, $4, $5, now() from u returning id, unit_id),
            c as (insert into calibrations (measurement_pk, recipe_id, unit_id, station_id, engine_version, verdict,
                                            purpose, offset_deg, offset_counts, attempt, result, compute_ms, computed_at)
                  select m.id, $6, m.unit_id, $3, $7, $8, 'station', $9, $10, 2, $11::jsonb, 1, now() from m
                  returning id, unit_id)
       insert into programming_confirmations (calibration_id, unit_id, station_id, expected_counts, written_counts,
                                              read_back_counts, matches, confirmed_at)
       select c.id, c.unit_id, $3, $10, $10, $10, true, now() from c`,
      [
        serial,
        m.measurementId,
        line.stationId,
        text,
        createHash('sha256').update(text).digest('hex'),
        line.recipeId,
        ENGINE_VERSION,
        result.verdict,
        result.offsetDeg,
        result.offsetCounts ?? 0,
        JSON.stringify(result),
      ],
    );
  }
  const ctx = { db, clock: () => new Date() };
  // Warm-up: the first PDF parses the fonts and the first record reads the released recipe once.
  const record = await unitRecord(db, serials[0]);
  await exportUnitRecordZip(ctx, actor, serials[1]);
  return [
    `unit record API (unitRecord: ${record.timeline.length} timeline entries for ${serials[0]}): ${await timed(
      RUNS,
      (i) => unitRecord(db, serials[i % serials.length]),
    )}`,
    `record export, PDF calibration record (audited): ${await timed(RUNS, (i) =>
      exportUnitRecordPdf(ctx, actor, serials[i % serials.length]),
    )}`,
    `record export, ZIP of PDF + raw files + SHA-256 manifest (audited): ${await timed(RUNS, (i) =>
      exportUnitRecordZip(ctx, actor, serials[i % serials.length]),
    )}`,
  ];
}

void main().catch((e: unknown) => {
  console.error(e);
  process.exit(1);
});
