// Over ~350 lines on purpose: the demo fortnight is one scenario (catalog, stations, work orders, runs,
// heartbeats, qualification, charts) in the order it happened; every write goes through the owning module.
import { randomUUID } from 'node:crypto';
import type pg from 'pg';
import type { Db } from '#server/db/client';
import type { SessionUser, StationPrincipal } from '#server/lib/auth';
import type { JobQueue } from '#jobs/queue-client';
import { queues } from '#jobs/queues';
import { createRng, type Rng } from '#shared/simulation/rng';
import { pino } from 'pino';
import type { Mailer } from '../mail/mail.service';
import type { Logger } from '#server/lib/logger';
import { insertAudit } from '../audit/audit.repository';
import { watchEveryStationModel } from '../alerts/alerts.service';
import { seedDemoQualification } from './demo-qualification.seed';
import {
  findModelRow,
  insertModelRow,
  insertRecipeRow,
  listModelRows,
  updateModelRow,
} from '../recipes/recipes.repository';
import {
  acceptMeasurement,
  computeCalibration,
  confirmProgramming,
  type MeasurementsContext,
} from '../measurements/measurements.service';
import { countMeasurements, measurementIdentity } from '../measurements/measurements.repository';
import { calibrationById, calibrationCounts } from '../calibrations/calibrations.repository';
import {
  createStation,
  createStationKey,
  isLiveStationKey,
  findStationByName,
  recordHeartbeat,
  revokeStationKeysLabelled,
} from '../stations/stations.service';
import { findUnitBySerial, importUnits, unitCounts } from '../units/units.service';
import { listUsers } from '../users/users.repository';
import {
  DEMO_HALL_BOARD_LOTS,
  DEMO_KEY_LABEL,
  DEMO_LINE,
  DEMO_MAGNET_RING_LOTS,
  DEMO_MODELS,
  DEMO_SIM_STATION,
  DEMO_STATIONS,
  DEMO_STATOR_LOTS,
  type DemoModel,
  type DemoStation,
} from './demo-line.scenario';
import { calibrationBlockChecksum, drawUnit, simulateRun, type UnitTruth } from './demo-physics';

export interface SeedDeps {
  db: Db;
  pool: pg.Pool;
  queue: JobQueue;
  /** For the watched charts' warnings; silent when not given. */
  logger?: Logger;
  /** Mails subscribers about alerts the seeded history raises; the demo's first start passes none. */
  mailer?: Mailer | null;
  /** The source of "now" when `now` is not given: the seed runs at this moment. */
  clock: () => Date;
}

export interface SeedOptions {
  /** Units produced over the fortnight (default 2,500). */
  units?: number;
  /** Seed of the scenario's random draws (default 2446). */
  seed?: number;
  /** The moment the seed runs (default: the clock's now); production covers the 14 days before today's midnight (UTC). */
  now?: Date;
  /** Units computed at the same time (default 6). */
  concurrency?: number;
  /** The plant time zone of the shift starts (default UTC). */
  timeZone?: string;
  onProgress?: (done: number, total: number) => void;
  /** Called as each step ends, with the milliseconds since the seed began. */
  onPhase?: (step: string, ms: number) => void;
}

export interface SeedReport {
  seeded: boolean;
  units: number;
  measurements: number;
  calibrations: { pass: number; fail: number; unusable: number };
  onHold: number;
  confirmations: number;
  mismatches: number;
  firstComputedAt: string | null;
  lastComputedAt: string | null;
  /** Calibrations the watched control charts took in at the end of the seed (0 when nothing was seeded). */
  chartPoints: number;
  ms: number;
}

const DAY_MS = 86_400_000;
const SHIFT_START_H = 6;
const SHIFT_END_H = 22;
/** Read-back differs from what was written (a flash write that did not take): rare, for the demo. */
const MISMATCH_RATE = 0.002;
const BAD_UNIT_RATE = 0.03;

/**
 * The queue the seed hands to the line services: it sends nothing. The seed computes every measurement
 * in-process with its simulated clock, so a compute job would only find its calibration and stop, and
 * the fortnight's travelers are rendered when someone first asks for one (see currentTraveler). Thousands
 * of such jobs would keep the queue busy for minutes after the first start and look like a fault on the
 * station panel; without them the line is steady when the seed ends. Event notifications the services
 * attach to a job are still sent, in the caller's transaction.
 */
export function silentSeedQueue(queue: JobQueue): JobQueue {
  return {
    ...queue,
    silent: true,
    async send(name, payload, opts) {
      queues[name].payload.parse(payload);
      const extra = opts?.notify ?? [];
      if (extra.length > 0 && opts?.db) {
        const text = `select ${extra.map((_, i) => `pg_notify($${2 * i + 1}, $${2 * i + 2})`).join(', ')}`;
        await opts.db.executeSql(
          text,
          extra.flatMap((n) => [n.channel, n.payload]),
        );
      }
      return null;
    },
  };
}

/** The two demo models with their released recipe v1 each; returns code → ids. */
export async function createDemoCatalog(db: Db, actor: { id: string } | null, releasedAt: Date) {
  const out = new Map<string, { modelId: string; recipeId: string; model: DemoModel }>();
  await db.transaction(async (tx) => {
    for (const m of DEMO_MODELS) {
      const model = await insertModelRow(tx, { code: m.code, name: m.name, polePairs: m.polePairs });
      const recipe = await insertRecipeRow(tx, {
        modelId: model.id,
        version: 1,
        status: 'released',
        body: m.recipe,
        notes: 'First release for Line 2 end-of-line calibration.',
        createdBy: actor?.id ?? null,
        releasedBy: actor?.id ?? null,
        releasedAt,
      });
      await updateModelRow(tx, model.id, { activeRecipeId: recipe.id });
      out.set(m.code, { modelId: model.id, recipeId: recipe.id, model: m });
    }
    await insertAudit(tx, {
      actorId: actor?.id,
      action: 'demo.catalog_seeded',
      after: { models: DEMO_MODELS.map((m) => m.code) },
    });
  });
  return out;
}

/** The person the demo's work-order import is recorded under: the demo engineer, else any engineer or admin. */
async function importActor(db: Db): Promise<SessionUser> {
  const rows = (await listUsers(db))
    .filter((u) => u.role === 'engineer' || u.role === 'admin')
    .map((u) => ({
      id: u.id,
      username: u.username,
      displayName: u.displayName,
      email: u.email,
      role: u.role,
    }));
  const actor = rows.find((r) => r.username === 'evan.engineer') ?? rows[0];
  if (!actor) {
    throw new Error(
      'The demo line needs the demo accounts (an engineer records the work-order import): start the server with SEED_DEMO=true first.',
    );
  }
  return actor;
}

interface PlannedUnit {
  index: number;
  serial: string;
  model: DemoModel;
  workOrder: string;
  hallBoardLot: string;
  magnetRingLot: string;
  statorLot: string;
  station: DemoStation;
  at: Date;
  truth: UnitTruth;
}

/** Working time of the fortnight: Monday to Friday, two shifts from 06:00 to 22:00 UTC. */
function workingWindows(end: Date): { start: number; end: number }[] {
  const windows: { start: number; end: number }[] = [];
  for (let d = 14; d >= 1; d--) {
    const day = new Date(end.getTime() - d * DAY_MS);
    const weekday = day.getUTCDay();
    if (weekday === 0 || weekday === 6) continue;
    windows.push({
      start: day.getTime() + SHIFT_START_H * 3_600_000,
      end: day.getTime() + SHIFT_END_H * 3_600_000,
    });
  }
  return windows;
}

/** A window of two consecutive lots that moves through the list as production goes on. */
function lotAt<T>(rng: Rng, lots: readonly T[], fraction: number): T {
  const first = Math.min(lots.length - 2, Math.floor(fraction * (lots.length - 1)));
  return lots[first + (rng.next() < 0.5 ? 0 : 1)];
}

function planProduction(count: number, seed: number, end: Date): PlannedUnit[] {
  const rng = createRng(seed);
  const windows = workingWindows(end);
  const working = windows.reduce((s, w) => s + (w.end - w.start), 0);
  const timeAt = (fraction: number) => {
    let left = fraction * working;
    for (const w of windows) {
      if (left <= w.end - w.start) return new Date(w.start + left);
      left -= w.end - w.start;
    }
    return new Date(windows[windows.length - 1].end);
  };
  const woSize = Math.max(10, Math.round(count / 24));
  const serialNo = new Map<string, number>();
  const planned: PlannedUnit[] = [];
  let wo = 0;
  while (planned.length < count) {
    wo++;
    const fraction = planned.length / count;
    const model = rng.next() < 0.6 ? DEMO_MODELS[0] : DEMO_MODELS[1];
    const hallLot = lotAt(rng, DEMO_HALL_BOARD_LOTS, fraction);
    const magnetRingLot = lotAt(rng, DEMO_MAGNET_RING_LOTS, fraction);
    const statorLot = lotAt(rng, DEMO_STATOR_LOTS, fraction);
    const candidates = DEMO_STATIONS.filter((s) => s.modelCodes.includes(model.code));
    for (let k = 0; k < woSize && planned.length < count; k++) {
      const i = planned.length;
      const n = (serialNo.get(model.code) ?? 0) + 1;
      serialNo.set(model.code, n);
      let r = rng.next() * candidates.reduce((s, c) => s + c.share[model.code], 0);
      const station = candidates.find((c) => (r -= c.share[model.code]) < 0) ?? candidates[0];
      planned.push({
        index: i,
        serial: `${model.code.replace('-', '')}-24-${String(100000 + n)}`,
        model,
        workOrder: `WO-24${String(5100 + wo)}`,
        hallBoardLot: hallLot.code,
        magnetRingLot,
        statorLot,
        station,
        at: timeAt((i + 0.2 + 0.6 * rng.next()) / count),
        truth: drawUnit(model, rng, { lotShiftDeg: hallLot.shiftDeg, badRate: BAD_UNIT_RATE }),
      });
    }
  }
  return planned;
}

function toCsv(planned: PlannedUnit[]): string {
  const lines = ['serial,model,work_order,hall_board_lot,magnet_ring_lot,stator_lot'];
  for (const u of planned) {
    lines.push([u.serial, u.model.code, u.workOrder, u.hallBoardLot, u.magnetRingLot, u.statorLot].join(','));
  }
  return lines.join('\n') + '\n';
}

/** Runs `task` over `items` with at most `limit` running at once. */
async function inParallel<T>(items: T[], limit: number, task: (item: T) => Promise<void>) {
  let next = 0;
  const runners = Array.from({ length: Math.min(limit, items.length) }, async () => {
    while (next < items.length) await task(items[next++]);
  });
  await Promise.all(runners);
}

/**
 * Seeds the demo line when the database has no models yet: catalog, stations, a work-order import of
 * the fortnight's units, then every station run through the line services (acceptMeasurement,
 * computeCalibration, confirmProgramming) with a clock that walks over the fortnight. Returns
 * `seeded: false` and touches nothing when models exist.
 */
export async function seedDemoLine(deps: SeedDeps, opts: SeedOptions = {}): Promise<SeedReport> {
  const t0 = performance.now();
  const count = opts.units ?? 2500;
  if (!Number.isInteger(count) || count < 1)
    throw new Error(`The demo line needs at least 1 unit (got ${count}).`);
  const now = opts.now ?? deps.clock();
  const empty: SeedReport = {
    seeded: false,
    units: 0,
    measurements: 0,
    calibrations: { pass: 0, fail: 0, unusable: 0 },
    onHold: 0,
    confirmations: 0,
    mismatches: 0,
    firstComputedAt: null,
    lastComputedAt: null,
    chartPoints: 0,
    ms: 0,
  };
  if ((await listModelRows(deps.db)).length > 0) return { ...empty, ms: performance.now() - t0 };

  const actor = await importActor(deps.db);
  const end = new Date(Date.UTC(now.getUTCFullYear(), now.getUTCMonth(), now.getUTCDate()));
  const fortnightStart = end.getTime() - 14 * DAY_MS;
  let catalog: Awaited<ReturnType<typeof createDemoCatalog>>;
  try {
    catalog = await createDemoCatalog(deps.db, actor, new Date(fortnightStart - DAY_MS));
  } catch (e) {
    // Another process seeded the catalog between our check and our insert: it owns the seed.
    const err = e as { code?: string; cause?: { code?: string } };
    if ((err.code ?? err.cause?.code) === '23505') return { ...empty, ms: performance.now() - t0 };
    throw e;
  }

  const principals = new Map<string, StationPrincipal>();
  for (const s of DEMO_STATIONS) {
    const row = await createStation(deps.db, actor, {
      name: s.name,
      line: DEMO_LINE,
      allowedModelIds: s.modelCodes.map((c) => catalog.get(c)!.modelId),
    });
    // The rig's own key; its text is not kept (the rig software of the demo is this seed).
    const key = await createStationKey(deps.db, actor, row.id, 'rig software');
    principals.set(s.name, { stationId: row.id, stationName: row.name, keyId: key.id });
  }

  const seed = opts.seed ?? 2446;
  const planned = planProduction(count, seed, end);
  opts.onPhase?.('catalog and stations', performance.now() - t0);
  const report = await importUnits(deps.db, actor, toCsv(planned));
  if (report.errors.length > 0) {
    throw new Error(`The demo work-order import was refused: ${JSON.stringify(report.errors.slice(0, 3))}`);
  }

  opts.onPhase?.('work-order import', performance.now() - t0);
  const queue = silentSeedQueue(deps.queue);
  const span = 14 * DAY_MS;
  let done = 0;
  // The last moment each rig was on: its last measurement, plus the minutes it idles before the shift ends.
  const lastSeen = new Map<string, number>();
  await inParallel(planned, opts.concurrency ?? 6, async (u) => {
    const rng = createRng((seed * 7919 + u.index * 104729) >>> 0);
    const principal = principals.get(u.station.name)!;
    const recipeId = catalog.get(u.model.code)!.recipeId;
    const maxAttempts = u.model.recipe.maxAttempts;
    let t = u.at.getTime();
    const at = (ms: number): MeasurementsContext => ({ ...deps, queue, clock: () => new Date(ms) });
    let attempts = 0;
    for (let run = 1; run <= maxAttempts + 2 && attempts < maxAttempts; run++) {
      const measurementId = randomUUID();
      const measurement = simulateRun(
        u.model,
        u.truth,
        { rig: u.station.rig, driftFraction: (t - fortnightStart) / span, attempt: run },
        rng,
        { measurementId, serial: u.serial },
      );
      await acceptMeasurement(at(t), principal, measurement);
      const stored = (await measurementIdentity(deps.db, measurementId))!;
      const computedAt = t + 40 + 200 * rng.next();
      const { calibrationId } = await computeCalibration(at(computedAt), {
        measurementPk: stored.id,
        recipeId,
      });
      const cal = (await calibrationById(deps.db, calibrationId))!;
      if (cal.verdict !== 'unusable') attempts++;
      if (cal.verdict === 'fail') {
        // A failure a retest cannot mend puts the unit on hold at once: the operator stops there.
        const now = await findUnitBySerial(deps.db, u.serial);
        if (now?.status === 'on_hold') break;
      }
      if (cal.verdict === 'pass' && cal.offsetCounts !== null) {
        const readBack =
          rng.next() < MISMATCH_RATE ? cal.offsetCounts + 1 + Math.floor(rng.next() * 40) : cal.offsetCounts;
        await confirmProgramming(at(computedAt + 2500 + 2000 * rng.next()), principal, measurementId, {
          writtenCounts: cal.offsetCounts,
          readBackCounts: readBack,
          checksum: calibrationBlockChecksum(u.serial, readBack),
        });
        break;
      }
      // The operator reseats the unit and spins it again a few minutes later.
      t = computedAt + (4 + 5 * rng.next()) * 60_000;
    }
    const idle = t + (1 + 4 * rng.next()) * 60_000;
    lastSeen.set(principal.stationId, Math.max(lastSeen.get(principal.stationId) ?? 0, idle));
    done++;
    if (opts.onProgress && (done % 250 === 0 || done === planned.length))
      opts.onProgress(done, planned.length);
  });

  // Rigs send heartbeats while they are on: leave each one's last heartbeat where its last shift ended.
  for (const [stationId, at] of lastSeen) await recordHeartbeat(deps.db, stationId, new Date(at));

  // Reference units, station policies and the qualification readings of the fortnight (and this morning).
  await seedDemoQualification(deps, actor, catalog, principals, {
    fortnightStart,
    now,
    timeZone: opts.timeZone ?? 'UTC',
  });
  opts.onPhase?.('station qualification', performance.now() - t0);

  // The fortnight was computed in-process, where no chart-watch job is queued: the watched control
  // charts take it in once here, so the drift alerts are on the overview from the first start.
  const watched = await watchEveryStationModel({
    db: deps.db,
    clock: () => now,
    logger: deps.logger ?? pino({ level: 'silent' }),
    mailer: deps.mailer ?? null,
  });
  opts.onPhase?.('watched control charts', performance.now() - t0);

  return {
    ...(await seedCounts(deps.db)),
    chartPoints: watched.taken,
    seeded: true,
    ms: performance.now() - t0,
  };
}

/** What the line holds now, for the seed's report. */
export async function seedCounts(db: Db): Promise<Omit<SeedReport, 'seeded' | 'ms' | 'chartPoints'>> {
  const u = await unitCounts(db);
  const measured = await countMeasurements(db);
  const { byVerdict, span, confirmations: c } = await calibrationCounts(db);
  const verdicts = Object.fromEntries(byVerdict.map((r) => [r.verdict, r.n]));
  const iso = (v: string | null) => (v ? new Date(v).toISOString() : null);
  return {
    units: u.units,
    measurements: measured,
    calibrations: { pass: verdicts.pass ?? 0, fail: verdicts.fail ?? 0, unusable: verdicts.unusable ?? 0 },
    onHold: u.onHold,
    confirmations: c.n,
    mismatches: c.mismatches,
    firstComputedAt: iso(span.first),
    lastComputedAt: iso(span.last),
  };
}

export interface DemoStationKey {
  stationId: string;
  stationName: string;
  modelCode: string;
  key: string;
}

/**
 * The key the station simulator posts as. A key it already holds (`keep`, read back from its key file)
 * stays in use while it is a live key of the demo station, so restarts do not re-key the simulator;
 * otherwise a fresh key is made (keys are stored hashed, so a lost key cannot be shown again) and the
 * station's previous demo keys are revoked (audited) so they do not pile up.
 */
export async function ensureDemoStationKey(
  db: Db,
  now: Date,
  keep?: string,
): Promise<DemoStationKey & { kept: boolean }> {
  const station = await findStationByName(db, DEMO_SIM_STATION);
  if (!station)
    throw new Error(`The demo station ${DEMO_SIM_STATION} does not exist: the demo line was not seeded.`);
  const model = (await findModelRow(db, station.allowedModelIds[0]))!;
  if (keep && (await isLiveStationKey(db, station.id, keep))) {
    return { stationId: station.id, stationName: station.name, modelCode: model.code, key: keep, kept: true };
  }
  const revoked = await revokeStationKeysLabelled(db, station.id, DEMO_KEY_LABEL, now);
  if (revoked.length > 0) {
    await insertAudit(db, {
      action: 'stations.key_revoked',
      subjectType: 'station',
      subjectId: station.id,
      reason: 'replaced by the demo key of a new start',
      after: { keys: revoked },
    });
  }
  const key = await createStationKey(db, null, station.id, DEMO_KEY_LABEL);
  return {
    stationId: station.id,
    stationName: station.name,
    modelCode: model.code,
    key: key.key,
    kept: false,
  };
}
