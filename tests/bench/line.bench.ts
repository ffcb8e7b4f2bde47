// npm run bench:line: the station line end to end on loopback. Starts a private PostgreSQL ('bench'
// instance, port PGPORT_BENCH, default 55437), a fresh database, the server and the worker as child
// processes, seeds two models and 32 stations, then:
//   1. raw PostgreSQL: single-row INSERT + COMMIT of a ~1 KB JSONB row on one connection (the yardstick);
//   2. closed loop: 32 simulated stations, each one unit at a time, for a fixed count of posts;
//      sustained calibrations per second and post → result latency;
//   3. open loop: posts at a fixed 50 per second whatever the answers, post → result latency.
//   4. traveler lag: from each calibration's commit (its NOTIFY) to its traveler stored (the renderer's
//      NOTIFY), over the closed loop, waiting for the renderers to finish the backlog afterwards.
// Every figure is printed beside its target (see TARGETS), with the load average: a shared machine
// makes the figures noisy, so compare ratios in one run rather than absolutes across runs.
// Prints figures; exits non-zero only when a post or result failed. Stops everything it started.
import { createHash } from 'node:crypto';
import { existsSync, readdirSync, readFileSync } from 'node:fs';
import { availableParallelism, loadavg } from 'node:os';
import { monitorEventLoopDelay } from 'node:perf_hooks';
import { join } from 'node:path';
import pg from 'pg';
import { ensurePostgres } from '#server/ops/pg-local.mjs';
import { prefixedLog } from '#server/ops/proc.mjs';
import {
  API_NODE_FLAGS,
  RENDERER_NODE_OPTIONS,
  TSX,
  freePort,
  startService,
  waitForHttp,
  type Service,
} from '#server/ops/services.mjs';
import { createDatabase } from '#server/db/client';
import { createStation, createStationKey } from '#server/modules/stations/stations.service';
import { createDemoCatalog } from '#server/modules/demo/demo-line.seed';
import { DEMO_MODELS, type DemoRig } from '#server/modules/demo/demo-line.scenario';
import { drawUnit, simulateRun, calibrationBlockChecksum } from '#server/modules/demo/demo-physics';
import {
  percentile,
  prepareStationSim,
  StationHttp,
  type StationSimReport,
} from '#server/modules/demo/station-client';
import { createRng } from '#shared/simulation/rng';
import { EVENTS_CHANNEL } from '#server/modules/events/event-hub';
import type { Measurement } from '#shared/schemas/measurement';

process.env.PGPORT_BENCH ??= '55437';
const STATIONS = 32;
const CLOSED_POSTS = Number(process.env.BENCH_LINE_POSTS ?? 2000);
// The target rate; BENCH_LINE_OPEN_RATE runs the open loop at another rate (e.g. one the machine can sustain).
const OPEN_RATE = Number(process.env.BENCH_LINE_OPEN_RATE ?? 50);
const OPEN_SECONDS = Number(process.env.BENCH_LINE_OPEN_SECONDS ?? 20);
const RAW_ROWS = 2000;
const PHASE_LIMIT_MS = 180_000;
const DB_NAME = 'phasewright_bench_line';
const RIG: DemoRig = { directions: 'both', detectorDelayUs: 3, detectorDriftUs: 0, jitterUs: 0.6 };

const TARGETS = {
  calibrationsPerSecond: 120,
  ratioToRawCommit: 0.035,
  openLoopP95Ms: 50,
  openLoopRate: 50,
  travelerLagP95Ms: 2000,
};
const TRAVELER_DRAIN_LIMIT_MS = 120_000;
const RENDER_NICE = process.env.BENCH_LINE_RENDER_NICE ?? '10';
// Renderer processes (`npm start`'s SCALE_RENDERERS); BENCH_LINE_RENDERERS tries another number.
const RENDERERS = Math.max(1, Number(process.env.BENCH_LINE_RENDERERS ?? 1) || 1);
// The renderer's node options under `npm start`; BENCH_LINE_RENDER_NODE_OPTIONS tries others ('' for none).
const RENDER_NODE_OPTIONS = process.env.BENCH_LINE_RENDER_NODE_OPTIONS ?? RENDERER_NODE_OPTIONS;
// The API process's V8 flags under `npm start`; BENCH_LINE_API_NODE_FLAGS tries others ('' for none).
const API_FLAGS =
  process.env.BENCH_LINE_API_NODE_FLAGS === undefined
    ? API_NODE_FLAGS
    : process.env.BENCH_LINE_API_NODE_FLAGS.split(/\s+/).filter(Boolean);
// BENCH_LINE_PROFILE=DIR writes a CPU profile of the server, the worker and the renderer into DIR
// (node --cpu-prof; open the .cpuprofile files in Chrome's DevTools or speedscope).
const PROFILE_DIR = process.env.BENCH_LINE_PROFILE;
const node = (script: string, flags: readonly string[] = []): [string, string[]] =>
  PROFILE_DIR
    ? [process.execPath, [...flags, '--cpu-prof', '--cpu-prof-dir', PROFILE_DIR, '--import', 'tsx', script]]
    : [TSX, [...flags, script]];

const log = prefixedLog('bench:line');
const verdict = (ok: boolean) => (ok ? 'met' : 'NOT met');
const load = () =>
  loadavg()
    .map((l) => l.toFixed(2))
    .join(' ');

/**
 * Listens to the line's events and times each calibration from its commit (calibration.committed is
 * sent by the committing statement, so it arrives at commit) to its stored traveler (traveler.ready).
 */
async function watchTravelers(url: string) {
  const committed = new Map<string, number>();
  const ready = new Map<string, number>();
  let recording = false;
  const c = new pg.Client({ connectionString: url });
  await c.connect();
  c.on('notification', (msg) => {
    const at = performance.now();
    let e: { type?: string; calibrationId?: string; verdict?: string };
    try {
      e = JSON.parse(msg.payload ?? '{}');
    } catch {
      return;
    }
    if (!e.calibrationId) return;
    if (e.type === 'calibration.committed' && recording && e.verdict !== 'unusable')
      committed.set(e.calibrationId, at);
    else if (e.type === 'traveler.ready') ready.set(e.calibrationId, at);
  });
  await c.query(`LISTEN ${EVENTS_CHANNEL}`);
  return {
    start: () => (recording = true),
    stop: () => (recording = false),
    /** Waits until every recorded calibration has its traveler (or the limit passes), then measures. */
    async drain(limitMs: number) {
      const t0 = performance.now();
      const pending = () => [...committed.keys()].filter((id) => !ready.has(id)).length;
      while (pending() > 0 && performance.now() - t0 < limitMs) await new Promise((r) => setTimeout(r, 100));
      const lags = [...committed].filter(([id]) => ready.has(id)).map(([id, at]) => ready.get(id)! - at);
      const lastCommit = Math.max(0, ...committed.values());
      const lastReady = Math.max(
        0,
        ...[...committed.keys()].filter((id) => ready.has(id)).map((id) => ready.get(id)!),
      );
      return {
        calibrations: committed.size,
        travelers: lags.length,
        missing: pending(),
        lags,
        lastBehindMs: lastReady - lastCommit,
      };
    },
    close: () => c.end(),
  };
}
/** Clock ticks a second of /proc's CPU times (Linux: 100 on every common configuration). */
const TICKS_PER_SECOND = 100;

/**
 * CPU seconds (user + system) used so far by a process and all its descendants; for PostgreSQL the
 * postmaster's own times include the backends that have exited (cutime/cstime), live ones are added.
 * Linux only; 0 elsewhere. Wall-clock figures swing with other work on a shared machine; CPU time per
 * unit much less, so it says where a unit's cost goes.
 */
/**
 * The whole machine's CPU time from /proc/stat, in seconds: busy (user, nice, system, interrupts), idle
 * (with I/O wait) and stolen (taken by the hypervisor for other guests). Linux only; zeros elsewhere. The
 * same work costs visibly more CPU time while the host is busy, so each run says what the machine was doing.
 */
function machineCpuSeconds(): { busy: number; idle: number; steal: number } {
  if (!existsSync('/proc/stat')) return { busy: 0, idle: 0, steal: 0 };
  const f = readFileSync('/proc/stat', 'utf8').split('\n')[0].trim().split(/\s+/).slice(1).map(Number);
  const tick = 100; // USER_HZ on Linux
  return {
    busy: (f[0] + f[1] + f[2] + f[5] + f[6]) / tick,
    idle: (f[3] + f[4]) / tick,
    steal: (f[7] ?? 0) / tick,
  };
}

/**
 * The CPU time this process takes for two fixed pieces of work, the least of three tries each: `compute`
 * (hashing 16 MB, then a loop in registers) and `memory` (random reads over 64 MB, then JSON round trips of
 * a measurement-sized object: cache misses and allocation, like a server's work). The same work every run:
 * when the host gives this machine less (other guests on the same cores or the same memory), the figures
 * rise, and every CPU-per-unit figure of the run with them. Between runs an hour apart on this machine the
 * line's CPU per unit has doubled while the compute figure stayed put, hence the memory one.
 */
function referenceWorkMs(): { compute: number; memory: number } {
  const buffer = Buffer.alloc(16 << 20, 7);
  const table = new Int32Array(16 << 20);
  for (let i = 0; i < table.length; i++) table[i] = (i * 2654435761) >>> 8;
  const doc = {
    timings: Array.from({ length: 400 }, (_, i) => ({ edge: i, t: i * 1.2345e-4, kind: 'hall' })),
  };
  const cpuMs = (fn: () => number) => {
    let best = Infinity;
    let sink = 0;
    for (let run = 0; run < 3; run++) {
      const t0 = process.cpuUsage();
      sink += fn();
      const d = process.cpuUsage(t0);
      best = Math.min(best, (d.user + d.system) / 1000);
    }
    return sink === -1 ? -1 : best; // the sink keeps the work from being optimised away
  };
  const compute = cpuMs(() => {
    createHash('sha256').update(buffer).digest();
    let x = 1;
    for (let i = 0; i < 20_000_000; i++) {
      x ^= x << 13;
      x ^= x >>> 17;
      x ^= x << 5;
    }
    return x;
  });
  const memory = cpuMs(() => {
    let x = 1;
    let sum = 0;
    for (let i = 0; i < 4_000_000; i++) {
      x ^= x << 13;
      x ^= x >>> 17;
      x ^= x << 5;
      sum += table[(x >>> 0) & (table.length - 1)];
    }
    for (let i = 0; i < 300; i++) sum += (JSON.parse(JSON.stringify(doc)) as typeof doc).timings.length;
    return sum;
  });
  return { compute, memory };
}

function treeCpuSeconds(rootPid: number | undefined): number {
  if (!rootPid || !existsSync('/proc')) return 0;
  const stats = new Map<number, { ppid: number; own: number; children: number }>();
  for (const entry of readdirSync('/proc')) {
    if (!/^\d+$/.test(entry)) continue;
    try {
      const text = readFileSync(`/proc/${entry}/stat`, 'utf8');
      const f = text.slice(text.lastIndexOf(')') + 2).split(' ');
      // After the command name: state(3) ppid(4) … utime(14) stime(15) cutime(16) cstime(17), 1-based.
      stats.set(Number(entry), {
        ppid: Number(f[1]),
        own: Number(f[11]) + Number(f[12]),
        children: Number(f[13]) + Number(f[14]),
      });
    } catch {
      // Gone meanwhile.
    }
  }
  let ticks = 0;
  const visit = (pid: number, root: boolean) => {
    const s = stats.get(pid);
    if (!s) return;
    ticks += s.own + (root ? s.children : 0);
    for (const [child, c] of stats) if (c.ppid === pid) visit(child, false);
  };
  visit(rootPid, true);
  return ticks / TICKS_PER_SECOND;
}

function postmasterPid(dataDir: string): number | undefined {
  try {
    return Number(readFileSync(join(dataDir, 'postmaster.pid'), 'utf8').split('\n')[0]) || undefined;
  } catch {
    return undefined;
  }
}

/**
 * Transactions the bench database has ended so far (commits and rollbacks). Nearly every statement on
 * the line's path is a transaction of its own, so the count per unit follows its round trips. A backend
 * reports its counts within a second while busy and within ten seconds once idle (PostgreSQL 15), so the
 * count is read after waiting that long.
 */
async function transactionCount(url: string): Promise<number> {
  await new Promise((r) => setTimeout(r, 11_000));
  const c = new pg.Client({ connectionString: url });
  await c.connect();
  try {
    const { rows } = await c.query<{ n: string }>(
      'select xact_commit + xact_rollback as n from pg_stat_database where datname = current_database()',
    );
    return Number(rows[0].n);
  } finally {
    await c.end();
  }
}

/**
 * Where PostgreSQL's CPU goes, by process kind: every second, each server process's CPU ticks from /proc
 * and its kind from pg_stat_activity (backend type, and for client backends the application name:
 * `phasewright-server`, `phasewright-worker`, `phasewright-queue`, …). A process that exits (an autovacuum
 * worker) keeps the ticks of its last sample, so a kind's figure is at most a second short.
 */
async function samplePostgresCpu(superuserUrl: string, postmaster: number | undefined) {
  const c = new pg.Client({ connectionString: superuserUrl, application_name: 'bench-sampler' });
  await c.connect();
  const seen = new Map<number, { kind: string; first: number; last: number }>();
  const ticksOf = (pid: number) => {
    try {
      const text = readFileSync(`/proc/${pid}/stat`, 'utf8');
      const f = text.slice(text.lastIndexOf(')') + 2).split(' ');
      if (Number(f[1]) !== postmaster) return undefined;
      return Number(f[11]) + Number(f[12]);
    } catch {
      return undefined;
    }
  };
  const sample = async () => {
    const { rows } = await c.query<{ pid: number; kind: string }>(
      `select pid, case when backend_type = 'client backend' then coalesce(nullif(application_name, ''), '(none)')
                        else backend_type end as kind
         from pg_stat_activity`,
    );
    for (const r of rows) {
      const t = ticksOf(r.pid);
      if (t === undefined) continue;
      const s = seen.get(r.pid);
      if (s) s.last = t;
      else seen.set(r.pid, { kind: r.kind, first: t, last: t });
    }
  };
  await sample();
  // A process first seen after the start counts from zero (it was born during the span).
  const born = new Set<number>();
  let stopped = false;
  const loop = (async () => {
    while (!stopped) {
      await new Promise((r) => setTimeout(r, 1000));
      const before = new Set(seen.keys());
      await sample().catch(() => {});
      for (const pid of seen.keys()) if (!before.has(pid)) born.add(pid);
    }
  })();
  return {
    async stop() {
      stopped = true;
      await loop;
      await c.end();
      const byKind = new Map<string, number>();
      for (const [pid, s] of seen) {
        const ticks = s.last - (born.has(pid) ? 0 : s.first);
        byKind.set(s.kind, (byKind.get(s.kind) ?? 0) + ticks / TICKS_PER_SECOND);
      }
      return byKind;
    },
  };
}

/**
 * With pg_stat_statements loaded on the bench server (shared_preload_libraries; the bench does not
 * change the server's settings), the statements of the measured span, costliest first.
 */
async function statementStats(superuserUrl: string) {
  const c = new pg.Client({ connectionString: superuserUrl });
  await c.connect();
  try {
    const { rows } = await c.query<{ on: boolean }>(
      `select current_setting('shared_preload_libraries') like '%pg_stat_statements%' as on`,
    );
    if (!rows[0].on) return null;
    await c.query('create extension if not exists pg_stat_statements');
    await c.query('select pg_stat_statements_reset()');
  } finally {
    await c.end();
  }
  return {
    async report(units: number, top = 15) {
      const r = new pg.Client({ connectionString: superuserUrl });
      await r.connect();
      try {
        const { rows } = await r.query<{
          calls: string;
          exec_ms: number;
          plan_ms: number;
          plans: string;
          query: string;
        }>(
          `select calls, total_exec_time as exec_ms, total_plan_time as plan_ms, plans, query
             from pg_stat_statements where dbid = (select oid from pg_database where datname = $1)
            order by total_exec_time + total_plan_time desc`,
          [DB_NAME],
        );
        const all = rows.reduce((s, x) => s + x.exec_ms + x.plan_ms, 0);
        const calls = rows.reduce((s, x) => s + Number(x.calls), 0);
        log(
          `pg_stat_statements over the closed loop and its backlog: ${(calls / units).toFixed(1)} statements a unit, ` +
            `${(all / units).toFixed(2)} ms of execution and planning a unit`,
        );
        for (const x of rows.slice(0, top))
          log(
            `  ${((x.exec_ms + x.plan_ms) / units).toFixed(3)} ms/unit (plan ${(x.plan_ms / units).toFixed(3)}, ${x.plans} plans), ` +
              `${(Number(x.calls) / units).toFixed(2)} calls/unit: ${x.query.replace(/\s+/g, ' ').slice(0, 160)}`,
          );
      } finally {
        await r.end();
      }
    },
  };
}

const services: Service[] = [];
const started: { pg: Awaited<ReturnType<typeof ensurePostgres>> | null } = { pg: null };

const ms = (v: number) => `${v.toFixed(1)} ms`;

/** ~1 KB of JSON like a small record: nested object, numbers and text. */
function rawRow(i: number) {
  return {
    serial: `RAW-${i}`,
    edges: Array.from({ length: 12 }, (_, k) => ({
      sensor: 'ABC'[k % 3],
      edge: k % 2 ? 'fall' : 'rise',
      us: i * 10 + k * 83.25,
    })),
    note: 'x'.repeat(500),
  };
}

async function rawInsertRate(url: string): Promise<number> {
  const c = new pg.Client({ connectionString: url });
  await c.connect();
  try {
    await c.query('create table if not exists bench_raw (id bigserial primary key, body jsonb not null)');
    const size = JSON.stringify(rawRow(1)).length;
    if (size < 900 || size > 1300) throw new Error(`raw row is ${size} bytes, not ~1 KB`);
    for (let i = 0; i < 100; i++) await c.query('insert into bench_raw (body) values ($1)', [rawRow(i)]);
    const t0 = performance.now();
    for (let i = 0; i < RAW_ROWS; i++) await c.query('insert into bench_raw (body) values ($1)', [rawRow(i)]);
    return RAW_ROWS / ((performance.now() - t0) / 1000);
  } finally {
    await c.end();
  }
}

/**
 * Bytes a unit costs in each big table: the table's whole size (heap, TOAST and indexes) over its rows.
 * The tables hold only this bench's units, so this is the line's own mix.
 */
async function storageSizes(ownerUrl: string) {
  const c = new pg.Client({ connectionString: ownerUrl });
  await c.connect();
  try {
    await c.query('vacuum analyze measurements, calibrations, travelers');
    const per = async (table: string, where = 'true') => {
      const { rows } = await c.query<{ bytes: string; n: string }>(
        `select pg_total_relation_size('${table}') as bytes, (select count(*) from ${table} where ${where}) as n`,
      );
      return Number(rows[0].bytes) / Math.max(1, Number(rows[0].n));
    };
    return {
      measurement: await per('measurements'),
      calibration: await per('calibrations'),
      traveler: await per('travelers'),
    };
  } finally {
    await c.end();
  }
}

interface BenchStation {
  http: StationHttp;
  modelIndex: number;
}

async function closedLoop(stations: BenchStation[], posts: number, tag: string) {
  const budget = { left: posts };
  const errors: string[] = [];
  // Each station's first measurements are made before the clock starts (a real station makes its own on
  // its own machine): enough for its share and half as much again; retests and any more are made as they come.
  const ahead = Math.ceil((posts / stations.length) * 1.5) + 4;
  const sims = stations.map((s, i) =>
    prepareStationSim(
      {
        http: s.http,
        model: DEMO_MODELS[s.modelIndex],
        rig: RIG,
        units: posts,
        ratePerSecond: 0,
        concurrency: 1,
        seed: 1000 + i,
        serialPrefix: `${tag}-${String(i + 1).padStart(2, '0')}`,
        budget,
        onError: (m) => errors.push(m),
      },
      ahead,
    ),
  );
  const timer = setTimeout(() => (budget.left = 0), PHASE_LIMIT_MS);
  const t0 = performance.now();
  const reports: StationSimReport[] = await Promise.all(sims.map((sim) => sim.run()));
  clearTimeout(timer);
  const seconds = (performance.now() - t0) / 1000;
  const latencies = reports.flatMap((r) => r.latenciesMs);
  return {
    seconds,
    posted: reports.reduce((s, r) => s + r.posted, 0),
    results: latencies.length,
    errors: reports.reduce((s, r) => s + r.errors, 0),
    // Units the server held after a failed attempt (sent to repair): the station stops there, no error.
    held: reports.reduce((s, r) => s + r.held, 0),
    errorSamples: errors.slice(0, 5),
    latencies,
    steps: {
      post: reports.flatMap((r) => r.stepsMs.post),
      result: reports.flatMap((r) => r.stepsMs.result),
      confirm: reports.flatMap((r) => r.stepsMs.confirm),
    },
  };
}

async function openLoop(stations: BenchStation[]) {
  const count = OPEN_RATE * OPEN_SECONDS;
  const rng = createRng(77);
  const planned: { station: BenchStation; m: Measurement }[] = [];
  for (let i = 0; i < count; i++) {
    const station = stations[i % stations.length];
    const model = DEMO_MODELS[station.modelIndex];
    const unit = drawUnit(model, rng, { badRate: 0 });
    planned.push({
      station,
      m: simulateRun(model, unit, { rig: RIG, attempt: 1 }, rng, {
        measurementId: crypto.randomUUID(),
        serial: `OPEN-${String(i + 1).padStart(5, '0')}`,
      }),
    });
  }
  const latencies: number[] = [];
  const postMs: number[] = [];
  const errors: string[] = [];
  const t0 = performance.now();
  const inFlight: Promise<void>[] = [];
  for (let i = 0; i < planned.length; i++) {
    const due = t0 + (i * 1000) / OPEN_RATE;
    const wait = due - performance.now();
    if (wait > 0) await new Promise((r) => setTimeout(r, wait));
    const { station, m } = planned[i];
    inFlight.push(
      (async () => {
        try {
          const start = performance.now();
          const accepted = await station.http.post(m);
          postMs.push(performance.now() - start);
          const cal = await station.http.result(accepted.resultUrl);
          if (!cal) throw new Error(`${m.serial}: no result within 30 s`);
          latencies.push(performance.now() - start);
          if (cal.verdict === 'pass' && cal.offsetCounts !== null) {
            await station.http.confirm(m.measurementId, {
              writtenCounts: cal.offsetCounts,
              readBackCounts: cal.offsetCounts,
              checksum: calibrationBlockChecksum(m.serial, cal.offsetCounts),
            });
          }
        } catch (e) {
          errors.push((e as Error).message);
        }
      })(),
    );
  }
  const offeredSeconds = (performance.now() - t0) / 1000;
  await Promise.all(inFlight);
  return { posted: planned.length, offeredRate: planned.length / offeredSeconds, latencies, postMs, errors };
}

/**
 * Where a loop's units waited, from the database's own clock: measurement stored (its intake
 * transaction's start) → station calibration's transaction started (the queue and the worker's fetch) →
 * traveler stored.
 */
async function loopStages(ownerUrl: string, serialPrefix: string) {
  const c = new pg.Client({ connectionString: ownerUrl });
  await c.connect();
  try {
    const { rows } = await c.query<{ queued_ms: number; traveler_ms: number | null }>(
      `select extract(epoch from c.computed_at - m.received_at) * 1000 as queued_ms,
              extract(epoch from t.created_at - c.computed_at) * 1000 as traveler_ms
         from measurements m
         join calibrations c on c.measurement_pk = m.id and c.purpose = 'station'
         left join travelers t on t.calibration_id = c.id and t.print_number = 1
        where m.serial like $1 || '-%'`,
      [serialPrefix],
    );
    return {
      queued: rows.map((r) => Number(r.queued_ms)),
      traveler: rows.filter((r) => r.traveler_ms !== null).map((r) => Number(r.traveler_ms)),
    };
  } finally {
    await c.end();
  }
}

async function main(): Promise<number> {
  log(`${availableParallelism()} cores, load average ${load()} at start`);
  const pgHandle = await ensurePostgres({ instance: 'bench', log: prefixedLog('postgres') });
  started.pg = pgHandle;
  const admin = new pg.Client({ connectionString: pgHandle.adminUrl });
  await admin.connect();
  await admin.query(`drop database if exists "${DB_NAME}" with (force)`);
  await admin.query(`create database "${DB_NAME}"`);
  await admin.end();
  // The processes connect as the app role, as under `npm start`; the server migrates as the owner.
  const url = new URL(pgHandle.url);
  url.pathname = `/${DB_NAME}`;
  const databaseUrl = url.toString();
  const ownerUrl = new URL(pgHandle.adminUrl);
  ownerUrl.pathname = `/${DB_NAME}`;

  const port = await freePort();
  const env = {
    ...process.env,
    NODE_ENV: 'test' as const,
    DATABASE_URL: databaseUrl,
    DATABASE_OWNER_URL: ownerUrl.toString(),
    PORT: String(port),
    SEED_DEMO: 'false',
    LOG_LEVEL: 'warn',
    CLIENT_DIST: '/nonexistent',
    SMTP_URL: `smtp://127.0.0.1:${await freePort()}`,
    MAILBOX_URL: '',
  };
  const server = startService('server', ...node('server/main.ts', API_FLAGS), {
    env,
    quiet: !process.env.BENCH_LINE_VERBOSE,
  });
  services.push(server);
  await waitForHttp(`http://127.0.0.1:${port}/api/health`, server);
  services.push(
    startService('worker', ...node('jobs/worker.ts'), {
      env: { ...env, WORKER_QUEUES: 'calibration-compute,chart-watch,housekeeping' },
      quiet: !process.env.BENCH_LINE_VERBOSE,
    }),
    // Renders run at the niceness `npm start` gives them (BENCH_LINE_RENDER_NICE tries another).
    ...Array.from({ length: RENDERERS }, (_, i) =>
      startService(
        i ? `renderer-${i + 1}` : 'renderer',
        'nice',
        ['-n', RENDER_NICE, ...node('jobs/worker.ts').flat()],
        {
          env: { ...env, WORKER_QUEUES: 'traveler-render', NODE_OPTIONS: RENDER_NODE_OPTIONS },
          quiet: !process.env.BENCH_LINE_VERBOSE,
        },
      ),
    ),
  );

  const database = createDatabase(databaseUrl, { max: 4, applicationName: 'phasewright-bench' });
  const stations: BenchStation[] = [];
  try {
    const catalog = await createDemoCatalog(database.db, null, new Date());
    for (let i = 0; i < STATIONS; i++) {
      const modelIndex = i % DEMO_MODELS.length;
      const station = await createStation(database.db, null, {
        name: `BENCH-${String(i + 1).padStart(2, '0')}`,
        line: 'Bench line',
        allowedModelIds: [catalog.get(DEMO_MODELS[modelIndex].code)!.modelId],
      });
      const key = await createStationKey(database.db, null, station.id, 'bench');
      stations.push({ http: new StationHttp(`http://127.0.0.1:${port}`, key.key), modelIndex });
    }
  } finally {
    await database.close();
  }
  // The worker announces itself by creating its queues' policies; give it a moment to start polling.
  await new Promise((r) => setTimeout(r, 3000));

  // As the owner: the app role may not create tables (the yardstick table is the bench's own).
  const rawRate = await rawInsertRate(ownerUrl.toString());
  log(`raw PostgreSQL single-row INSERT+COMMIT (~1 KB JSONB, 1 connection): ${rawRate.toFixed(0)} rows/s`);
  const referenceBefore = referenceWorkMs();
  const refText = (r: { compute: number; memory: number }) =>
    `compute ${r.compute.toFixed(0)} ms, memory ${r.memory.toFixed(0)} ms`;
  log(
    `reference work (fixed, CPU time, least of three): ${refText(referenceBefore)}; ` +
      `it rises when the host gives this machine less, and every CPU figure below with it`,
  );

  const warm = await closedLoop(stations, 2 * STATIONS, 'WARM');
  log(`warm-up: ${warm.results} results, ${warm.errors} errors`);
  for (const e of warm.errorSamples) log(`warm-up error: ${e}`);

  const [serverSvc, workerSvc, ...rendererSvcs] = services;
  const cpuNow = () => ({
    server: treeCpuSeconds(serverSvc.child.pid),
    worker: treeCpuSeconds(workerSvc.child.pid),
    renderer: rendererSvcs.reduce((sum, r) => sum + treeCpuSeconds(r.child.pid), 0),
    postgres: treeCpuSeconds(postmasterPid(pgHandle.dataDir)),
    stations: process.cpuUsage().user / 1e6 + process.cpuUsage().system / 1e6,
  });
  const cpuBefore = cpuNow();
  const machineBefore = machineCpuSeconds();
  const xactsBefore = await transactionCount(ownerUrl.toString());
  const superuserUrl = `postgres://postgres@/${DB_NAME}?host=${encodeURIComponent(pgHandle.socketDir)}&port=${pgHandle.port}`;
  const statements = pgHandle.external ? null : await statementStats(superuserUrl);
  // The sampler reads from the `postgres` database, so its own queries stay out of the bench database's counts.
  const pgSampler = pgHandle.external
    ? null
    : await samplePostgresCpu(
        superuserUrl.replace(`/${DB_NAME}?`, '/postgres?'),
        postmasterPid(pgHandle.dataDir),
      );
  const watch = await watchTravelers(databaseUrl);
  watch.start();
  // The simulated stations share this process's event loop: its delays are in every time they measure.
  const stationsLoop = monitorEventLoopDelay({ resolution: 5 });
  stationsLoop.enable();
  const closed = await closedLoop(stations, CLOSED_POSTS, 'LOAD');
  stationsLoop.disable();
  watch.stop();
  const throughput = closed.results / closed.seconds;
  log(
    `closed loop, ${STATIONS} stations one unit at a time: ${closed.posted} posts, ${closed.results} results in ${closed.seconds.toFixed(1)} s → ${throughput.toFixed(0)} calibrations/s ` +
      `(target ≥ ${TARGETS.calibrationsPerSecond}: ${verdict(throughput >= TARGETS.calibrationsPerSecond)}); ` +
      `post → result p50 ${ms(percentile(closed.latencies, 50))}, p95 ${ms(percentile(closed.latencies, 95))}, p99 ${ms(percentile(closed.latencies, 99))}; ${closed.held} units held for repair (not retested); ${closed.errors} errors; load average ${load()}`,
  );
  const travelers = await watch.drain(TRAVELER_DRAIN_LIMIT_MS);
  {
    const st = await loopStages(ownerUrl.toString(), 'LOAD');
    const p = (xs: number[]) => `p50 ${ms(percentile(xs, 50))}, p95 ${ms(percentile(xs, 95))}`;
    log(
      `the stations' own event loop (this process) over the closed loop: delay p50 ${(stationsLoop.percentile(50) / 1e6).toFixed(1)} ms, ` +
        `p99 ${(stationsLoop.percentile(99) / 1e6).toFixed(1)} ms, max ${(stationsLoop.max / 1e6).toFixed(1)} ms (sampled every 5 ms; ` +
        `a delay here is in every step time below)`,
    );
    log(
      `closed loop by step at the stations: post answered ${p(closed.steps.post)}; then result ${p(closed.steps.result)}; ` +
        `then confirmation answered ${p(closed.steps.confirm)}; a station's whole cycle ${ms((closed.seconds * 1000 * STATIONS) / Math.max(1, closed.results))} on average`,
    );
    log(
      `closed loop by stage: measurement stored → its calibration started p50 ${ms(percentile(st.queued, 50))}, p95 ${ms(percentile(st.queued, 95))}; ` +
        `calibration started → traveler stored p50 ${ms(percentile(st.traveler, 50))}, p95 ${ms(percentile(st.traveler, 95))}`,
    );
  }
  await watch.close();
  const lagP95 = percentile(travelers.lags, 95);
  log(
    `traveler lag (calibration committed → traveler stored), closed loop: ${travelers.travelers} of ${travelers.calibrations} travelers; ` +
      `p50 ${ms(percentile(travelers.lags, 50))}, p95 ${ms(lagP95)}, max ${ms(Math.max(0, ...travelers.lags))} ` +
      `(target p95 ≤ ${TARGETS.travelerLagP95Ms} ms: ${verdict(travelers.missing === 0 && lagP95 <= TARGETS.travelerLagP95Ms)}); ` +
      `last traveler ${ms(travelers.lastBehindMs)} after the last calibration; ${travelers.missing} missing after ${TRAVELER_DRAIN_LIMIT_MS / 1000} s; load average ${load()}`,
  );

  const cpuAfter = cpuNow();
  const machineAfter = machineCpuSeconds();
  const pgKinds = await pgSampler?.stop();
  const xactsPerUnit =
    ((await transactionCount(ownerUrl.toString())) - xactsBefore) / Math.max(1, closed.results);
  const cpuPerUnitMs = Object.fromEntries(
    Object.entries(cpuAfter).map(([k, v]) => [
      k,
      Math.round(((v - cpuBefore[k as keyof typeof cpuAfter]) * 1000 * 10) / Math.max(1, closed.results)) /
        10,
    ]),
  ) as Record<keyof typeof cpuAfter, number>;
  const productMs = cpuPerUnitMs.server + cpuPerUnitMs.worker + cpuPerUnitMs.renderer + cpuPerUnitMs.postgres;
  log(
    `CPU per unit over the closed loop and its traveler backlog (user + system): API ${cpuPerUnitMs.server} ms, ` +
      `compute worker ${cpuPerUnitMs.worker} ms, renderer ${cpuPerUnitMs.renderer} ms, PostgreSQL ${cpuPerUnitMs.postgres} ms ` +
      `→ ${productMs.toFixed(1)} ms a unit, ${(1000 / productMs).toFixed(0)} units a second per core of this machine` +
      ` (the simulated stations in this process: ${cpuPerUnitMs.stations} ms); load average ${load()}`,
  );
  {
    const busy = machineAfter.busy - machineBefore.busy;
    const all = busy + machineAfter.idle - machineBefore.idle + machineAfter.steal - machineBefore.steal;
    const ours = Object.keys(cpuAfter).reduce(
      (sum, k) => sum + cpuAfter[k as keyof typeof cpuAfter] - cpuBefore[k as keyof typeof cpuBefore],
      0,
    );
    log(
      `the machine over the same span: ${((100 * busy) / Math.max(all, 1e-9)).toFixed(0)} % busy, ` +
        `${((100 * (machineAfter.steal - machineBefore.steal)) / Math.max(all, 1e-9)).toFixed(1)} % stolen by the hypervisor; ` +
        `the bench's processes ${ours.toFixed(1)} of ${busy.toFixed(1)} busy CPU-seconds (the rest is other work on the machine)`,
    );
  }
  log(
    `transactions per unit over the same span (PostgreSQL's commits and rollbacks in the bench database, ` +
      `pg-boss's polling and the traveler backlog included): ${xactsPerUnit.toFixed(1)}`,
  );

  if (pgKinds) {
    const parts = [...pgKinds]
      .sort((a, b) => b[1] - a[1])
      .map(([kind, seconds]) => `${kind} ${((seconds * 1000) / Math.max(1, closed.results)).toFixed(1)} ms`);
    log(`PostgreSQL's CPU per unit by process (sampled each second): ${parts.join(', ')}`);
  }
  await statements?.report(Math.max(1, closed.results));

  const sizes = await storageSizes(ownerUrl.toString());
  log(
    `bytes per unit (closed-loop units, rows with their indexes and TOAST): measurement ${sizes.measurement.toFixed(0)} B, ` +
      `station calibration ${sizes.calibration.toFixed(0)} B, traveler PDF ${sizes.traveler.toFixed(0)} B; ` +
      `≈ ${((sizes.measurement + sizes.calibration + sizes.traveler) / 1024).toFixed(1)} KiB a unit, ` +
      `${(((sizes.measurement + sizes.calibration + sizes.traveler) * 1e6) / 1024 ** 3).toFixed(1)} GiB per million units`,
  );

  const open = await openLoop(stations);
  log(
    `open loop at ${OPEN_RATE} posts/s (offered ${open.offeredRate.toFixed(1)}/s, ${open.posted} posts): post → result ` +
      `p50 ${ms(percentile(open.latencies, 50))}, p95 ${ms(percentile(open.latencies, 95))}, p99 ${ms(percentile(open.latencies, 99))}, ` +
      `max ${ms(Math.max(0, ...open.latencies))}; ${open.errors.length} errors ` +
      `(target p95 ≤ ${TARGETS.openLoopP95Ms} ms at ${TARGETS.openLoopRate} posts/s: ${OPEN_RATE === TARGETS.openLoopRate ? verdict(percentile(open.latencies, 95) <= TARGETS.openLoopP95Ms) : 'not judged at this rate'}); load average ${load()}`,
  );

  const stages = await loopStages(ownerUrl.toString(), 'OPEN');
  log(
    `open loop by stage: the post answered p50 ${ms(percentile(open.postMs, 50))}, p95 ${ms(percentile(open.postMs, 95))}; ` +
      `measurement stored → its calibration started p50 ${ms(percentile(stages.queued, 50))}, p95 ${ms(percentile(stages.queued, 95))}; ` +
      `calibration started → traveler stored p50 ${ms(percentile(stages.traveler, 50))}, p95 ${ms(percentile(stages.traveler, 95))}`,
  );

  const referenceAfter = referenceWorkMs();
  log(`reference work at the end: ${refText(referenceAfter)} (at the start: ${refText(referenceBefore)})`);

  const ratio = throughput / rawRate;
  log(
    `throughput / raw commit rate = ${throughput.toFixed(0)} / ${rawRate.toFixed(0)} = ${ratio.toFixed(3)} (target ≥ ${TARGETS.ratioToRawCommit}: ${verdict(ratio >= TARGETS.ratioToRawCommit)}); load average ${load()} at the end`,
  );
  process.stdout.write(
    `${JSON.stringify({
      rawInsertsPerSecond: Math.round(rawRate),
      referenceWorkMs: { start: referenceBefore, end: referenceAfter },
      calibrationsPerSecond: Math.round(throughput * 10) / 10,
      ratio: Math.round(ratio * 1000) / 1000,
      closedLatencyMs: {
        p50: percentile(closed.latencies, 50),
        p95: percentile(closed.latencies, 95),
        p99: percentile(closed.latencies, 99),
      },
      travelerLagMs: {
        p50: percentile(travelers.lags, 50),
        p95: lagP95,
        lastBehind: travelers.lastBehindMs,
        missing: travelers.missing,
      },
      bytesPerUnit: sizes,
      cpuPerUnitMs,
      transactionsPerUnit: Math.round(xactsPerUnit * 10) / 10,
      loadAverage: loadavg(),
      openLoop: {
        ratePerSecond: OPEN_RATE,
        p50: percentile(open.latencies, 50),
        p95: percentile(open.latencies, 95),
        p99: percentile(open.latencies, 99),
      },
      errors: warm.errors + closed.errors + open.errors.length,
    })}\n`,
  );
  for (const e of [...warm.errorSamples, ...closed.errorSamples, ...open.errors.slice(0, 5)])
    log(`error: ${e}`);
  return warm.errors + closed.errors + open.errors.length > 0 ? 1 : 0;
}

let stopping = false;
async function stopAll() {
  for (const s of services.reverse()) await s.stop();
  services.length = 0;
  if (started.pg?.startedByUs) await started.pg.stop();
  started.pg = null;
}
// Stopped from outside (Ctrl-C, a timeout): stop the server, workers and database it started, too.
for (const signal of ['SIGINT', 'SIGTERM'] as const) {
  process.on(signal, () => {
    if (stopping) return;
    stopping = true;
    void stopAll().finally(() => process.exit(130));
  });
}

let code = 1;
try {
  code = await main();
} catch (e) {
  log(`failed: ${e instanceof Error ? e.message : String(e)}`);
} finally {
  if (!stopping) await stopAll();
}
process.exit(code);
