import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq, sql } from 'drizzle-orm';
import { createTestApp, type TestApp } from '#tests/harness/test-app';
import { models } from '../recipes/recipes.table';
import { calibrations } from '../calibrations/calibrations.table';
import { authenticateStationKey } from '../stations/stations.service';
import { stations } from '../stations/stations.table';
import { units } from '../units/units.table';
import type { CalibrationResult } from '#shared/schemas/calibration-result';
import {
  DEMO_SIM_STATION,
  DRIFTING_STATION,
  OFF_HALL_BOARD_LOT,
  demoModel,
  demoStation,
  DEMO_HALL_BOARD_LOTS,
  DEMO_MODELS,
} from './demo-line.scenario';
import { stationQualification } from '../qualification/qualification.service';
import { studyDetail } from '../qualification/gauge-study-results.service';
import { ensureDemoStationKey, seedDemoLine, type SeedReport } from './demo-line.seed';

const DAY_MS = 86_400_000;
// A Thursday: the fortnight before it holds ten working days from Thursday to Wednesday.
const NOW = new Date('2026-11-19T09:30:00Z');
const FORTNIGHT_START = Date.UTC(2026, 10, 5);

interface Row {
  station: string;
  model: string;
  lot: string | null;
  offsetDeg: number;
  day: number;
  speedRpm: number;
}

let t: TestApp;
let first: SeedReport;
let rows: Row[];

beforeAll(async () => {
  t = await createTestApp();
  first = await seedDemoLine(t.deps, { units: 240, now: NOW });
  const found = await t.deps.db
    .select({
      station: stations.name,
      model: models.code,
      lot: units.hallBoardLot,
      offsetDeg: calibrations.offsetDeg,
      computedAt: calibrations.computedAt,
      result: calibrations.result,
    })
    .from(calibrations)
    .innerJoin(stations, eq(stations.id, calibrations.stationId))
    .innerJoin(units, eq(units.id, calibrations.unitId))
    .innerJoin(models, eq(models.id, units.modelId))
    .where(eq(calibrations.verdict, 'pass'));
  rows = found.map((r) => ({
    station: r.station,
    model: r.model,
    lot: r.lot,
    offsetDeg: r.offsetDeg!,
    day: (r.computedAt.getTime() - FORTNIGHT_START) / DAY_MS,
    speedRpm: (r.result as CalibrationResult).segments[0].speedRpm,
  }));
}, 120_000); // the seed also certifies reference units and runs a qualification history and two gauge studies

afterAll(async () => {
  await t?.close();
}, 180_000); // seeding 240 units through the line takes a while on a busy two-core machine

const mean = (xs: number[]) => xs.reduce((s, x) => s + x, 0) / xs.length;

/** Offset relative to its model's mean at the steady both-direction stations on the unaffected lots. */
function residuals(): (Row & { residualDeg: number })[] {
  const modelMean = new Map<string, number>();
  for (const code of new Set(rows.map((r) => r.model))) {
    modelMean.set(
      code,
      mean(
        rows
          .filter((r) => r.model === code && r.station !== DRIFTING_STATION && r.lot !== OFF_HALL_BOARD_LOT)
          .map((r) => r.offsetDeg),
      ),
    );
  }
  return rows.map((r) => ({ ...r, residualDeg: r.offsetDeg - modelMean.get(r.model)! }));
}

describe('the demo line seed', () => {
  it('imports the units with their lots and calibrates them through the line over the fortnight', async () => {
    expect(first.seeded).toBe(true);
    // The work order's 240 units, and per model a reference unit and 10 gauge-study parts (registered apart, no lots).
    expect(first.units).toBe(240 + DEMO_MODELS.length * 11);
    const [withLots] = await t.deps.db
      .select({ n: sql<number>`count(*)::int` })
      .from(units)
      .where(sql`${units.hallBoardLot} is not null and ${units.workOrder} is not null`);
    expect(withLots.n).toBe(240);
    // Every unit got at least one calibration; the few bad units add retests.
    expect(first.measurements).toBeGreaterThanOrEqual(240);
    expect(first.calibrations.pass).toBeGreaterThan(200);
    expect(first.calibrations.fail).toBeGreaterThan(0);
    const spanDays =
      (new Date(first.lastComputedAt!).getTime() - new Date(first.firstComputedAt!).getTime()) / DAY_MS;
    expect(spanDays).toBeGreaterThan(12);
    expect(new Date(first.firstComputedAt!).getTime()).toBeGreaterThanOrEqual(FORTNIGHT_START);
    expect(new Date(first.lastComputedAt!).getTime()).toBeLessThan(FORTNIGHT_START + 14 * DAY_MS);
    // Units that never passed in the recipe's attempts are on hold.
    expect(first.onHold).toBeGreaterThan(0);
  });

  it("shows the drifting station's offset moving by the angle its growing detector delay is worth", () => {
    // A timing delay τ at electrical frequency fe is an angle of 360·fe·τ degrees (domain notes, hall
    // model). Crossings that come τ later make θ(t) look τ late, so a forward-only rig measures the
    // offset 360·fe·τ lower; a rig that measures both directions cancels it.
    const r = residuals().filter((x) => x.lot !== OFF_HALL_BOARD_LOT);
    const drift = demoStation(DRIFTING_STATION).rig.detectorDriftUs * 1e-6;
    const early = (x: Row) => x.day < 14 / 3;
    const late = (x: Row) => x.day > (2 * 14) / 3;
    const change = (station: string) =>
      mean(r.filter((x) => x.station === station && late(x)).map((x) => x.residualDeg)) -
      mean(r.filter((x) => x.station === station && early(x)).map((x) => x.residualDeg));
    const expectedDeg = (x: Row) =>
      -360 * ((x.speedRpm * demoModel(x.model).polePairs) / 60) * drift * (x.day / 14);
    const drifting = r.filter((x) => x.station === DRIFTING_STATION);
    const expected =
      mean(drifting.filter(late).map(expectedDeg)) - mean(drifting.filter(early).map(expectedDeg));
    expect(expected).toBeLessThan(-1.5);
    expect(change(DRIFTING_STATION)).toBeCloseTo(expected, 0);
    for (const steady of ['EOL-21', 'EOL-22']) {
      expect(Math.abs(change(steady))).toBeLessThan(0.8);
      expect(Math.abs(change(DRIFTING_STATION))).toBeGreaterThan(2 * Math.abs(change(steady)));
    }
  });

  it("shows the off hall-board lot's offset apart from the other lots by its sensor rotation", () => {
    const r = residuals().filter((x) => x.station !== DRIFTING_STATION);
    const off = r.filter((x) => x.lot === OFF_HALL_BOARD_LOT);
    const others = r.filter((x) => x.lot !== OFF_HALL_BOARD_LOT);
    expect(off.length).toBeGreaterThan(10);
    const shift = DEMO_HALL_BOARD_LOTS.find((l) => l.code === OFF_HALL_BOARD_LOT)!.shiftDeg;
    const diff = mean(off.map((x) => x.residualDeg)) - mean(others.map((x) => x.residualDeg));
    expect(Math.abs(diff - shift)).toBeLessThan(1);
  });

  it('leaves every rig that measured a last heartbeat at the end of its last run, and no job queued', async () => {
    const seen = await t.deps.db
      .select({
        name: stations.name,
        lastSeenAt: stations.lastSeenAt,
        last: sql<Date>`max(${calibrations.computedAt})`,
      })
      .from(stations)
      .innerJoin(calibrations, eq(calibrations.stationId, stations.id))
      .groupBy(stations.name, stations.lastSeenAt);
    expect(seen.length).toBeGreaterThan(0);
    for (const s of seen) {
      expect(s.lastSeenAt, s.name).not.toBeNull();
      const after = s.lastSeenAt!.getTime() - new Date(s.last).getTime();
      // A rig idles a few minutes after its last unit before the shift ends (the seed's own rule).
      expect(after, s.name).toBeGreaterThan(0);
      expect(after, s.name).toBeLessThan(10 * 60_000);
    }
    // History is seeded without jobs: the line is steady as soon as the seed ends.
    const { rows } = await t.database.pool.query(
      `select count(*)::int as n from pgboss.job where state in ('created', 'retry', 'active')`,
    );
    expect(rows[0].n).toBe(0);
  });

  it('never retests a unit that a failure sent to repair', async () => {
    const { rows } = await t.database.pool.query(
      `select u.serial, count(c.*)::int as n from units u join calibrations c on c.unit_id = u.id
        where u.status = 'on_hold' and u.hold_reason like 'Sent to repair%' group by u.serial`,
    );
    for (const r of rows) expect(r.n, r.serial).toBe(1);
  });

  it('adds nothing when run again', async () => {
    const again = await seedDemoLine(t.deps, { units: 240, now: NOW });
    expect(again.seeded).toBe(false);
    const [u] = await t.deps.db.select({ n: sql<number>`count(*)::int` }).from(units);
    const [c] = await t.deps.db.select({ n: sql<number>`count(*)::int` }).from(calibrations);
    expect(u.n).toBe(first.units);
    expect(c.n).toBe(first.calibrations.pass + first.calibrations.fail + first.calibrations.unusable);
  });

  it('keeps the simulator station key across starts while it is valid', async () => {
    const a = await ensureDemoStationKey(t.deps.db, new Date());
    const again = await ensureDemoStationKey(t.deps.db, new Date(), a.key);
    expect(a.stationName).toBe(DEMO_SIM_STATION);
    expect(again).toMatchObject({ key: a.key, kept: true, modelCode: 'CV-57B' });
    const who = await authenticateStationKey(t.deps.pool, a.key, new Date());
    expect(who?.stationId).toBe(a.stationId);
  });

  it('gives the simulator station a fresh key when its key was lost or revoked, and revokes the old one', async () => {
    const a = await ensureDemoStationKey(t.deps.db, new Date());
    const b = await ensureDemoStationKey(t.deps.db, new Date(), 'pwsk_not-a-key-of-this-station');
    expect(b.kept).toBe(false);
    expect(b.key).not.toBe(a.key);
    expect(await authenticateStationKey(t.deps.pool, a.key, new Date())).toBeNull();
    const who = await authenticateStationKey(t.deps.pool, b.key, new Date());
    expect(who?.stationId).toBe(b.stationId);
  });

  it('gives every model a certified reference unit and every station a qualification history; the steady stations start qualified', async () => {
    const refs = await t.database.pool.query(
      'select serial, certified_offset_deg, certified_from from reference_units order by serial',
    );
    expect(refs.rows.map((r) => r.serial)).toEqual(['R-57B-01', 'R-86S-01']);
    for (const r of refs.rows) expect(r.certified_from.n).toBe(5);
    const all = await t.deps.db.select().from(stations);
    for (const s of all) {
      const q = await stationQualification(
        { db: t.deps.db, pool: t.deps.pool, clock: () => NOW, timeZone: 'UTC' },
        s.id,
      );
      if (s.name === DRIFTING_STATION) {
        // The forward-only rig folds the unit's lag into its reading and its detector drifts: it fails.
        expect(q.kind, s.name).toBe('failed');
      } else {
        expect(q.kind, s.name).toBe('qualified');
      }
    }
    // The reference units were never calibrated as production units.
    const cals = await t.database.pool.query(
      `select count(*)::int as n from measurements where serial like 'R-%'`,
    );
    expect(cals.rows[0].n).toBe(0);
  });

  it('holds one finished gauge study per model, whose forward-only drifting station makes the system unacceptable', async () => {
    const { rows } = await t.database.pool.query(`select id, status from gauge_studies order by name`);
    expect(rows).toHaveLength(DEMO_MODELS.length);
    for (const r of rows) {
      expect(r.status).toBe('finished');
      const d = await studyDetail(t.deps.db, r.id);
      expect(d.results!.anova.av).toBeGreaterThan(d.results!.anova.ev);
      expect(d.results!.reading.reading).toBe('unacceptable');
    }
  });
});
