import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, type TestApp } from '#tests/harness/test-app';
import { seedDemoLine } from '../demo/demo-line.seed';
import { computeCalibration } from '../measurements/compute/compute.service';

// calibration_stats is the statistics' narrow copy of each calibration, written by PostgreSQL triggers
// (migration 0021). Here every row is held against its calibration, its unit, its recipe version and its
// measurement, with the figures read from the stored engine result in JavaScript (not by the SQL the
// trigger uses).

const NOW = new Date('2026-11-19T09:30:00Z');
let t: TestApp;

beforeAll(async () => {
  t = await createTestApp();
  await seedDemoLine(t.deps, { units: 40, now: NOW });
}, 120_000);

afterAll(async () => {
  await t?.close();
});

interface Joined {
  id: string;
  result: {
    lagDeg?: number;
    speedRpm?: number;
    fitResidualDeg?: number;
    capture?: { keVPerKrpmPeak?: number };
    sensors?: { sensor: string; placementDeg?: number }[];
  };
  [column: string]: unknown;
}

/** Every calibration beside what its stats row should hold, and the stats row as stored. */
async function expectedAndStored() {
  const { rows } = await t.database.pool.query<Joined>(`
    select c.id, c.result, c.computed_at, c.offset_deg, u.model_id, c.station_id, c.unit_id,
           m.operator_id, c.purpose::text, c.verdict::text, c.attempt, r.version as recipe_version, u.serial,
           u.hall_board_lot, u.magnet_ring_lot, u.stator_lot
      from calibrations c join units u on u.id = c.unit_id join recipes r on r.id = c.recipe_id
      join measurements m on m.id = c.measurement_pk order by c.id`);
  const { rows: stored } = await t.database.pool.query<Record<string, unknown>>(`
    select calibration_id as id, computed_at, offset_deg, lag_deg, speed_rpm, fit_residual_deg, ke_v_per_krpm,
           placement_a_deg, placement_b_deg, placement_c_deg, model_id, station_id, unit_id, operator_id,
           purpose::text, verdict::text, attempt, recipe_version, serial, hall_board_lot, magnet_ring_lot, stator_lot
      from calibration_stats order by calibration_id`);
  const placement = (r: Joined, s: string) =>
    r.result.sensors?.find((x) => x.sensor === s)?.placementDeg ?? null;
  const expected = rows.map(({ result, ...r }) => {
    const j = { ...r, result } as Joined;
    return {
      ...r,
      lag_deg: result.lagDeg ?? null,
      speed_rpm: result.speedRpm ?? null,
      fit_residual_deg: result.fitResidualDeg ?? null,
      ke_v_per_krpm: result.capture?.keVPerKrpmPeak ?? null,
      placement_a_deg: placement(j, 'A'),
      placement_b_deg: placement(j, 'B'),
      placement_c_deg: placement(j, 'C'),
    };
  });
  return { expected, stored };
}

describe('the statistics copy of each calibration', () => {
  it('holds one row per calibration of the demo line, equal to the calibration, its unit, recipe and measurement', async () => {
    const { expected, stored } = await expectedAndStored();
    expect(expected.length).toBeGreaterThan(40);
    expect(stored).toEqual(expected);
    // The demo results carry lags and placement residuals: the figure columns are really filled.
    expect(stored.some((r) => r.lag_deg !== null)).toBe(true);
    expect(stored.some((r) => r.placement_b_deg !== null)).toBe(true);
  });

  it('gets a row for an engineer’s recomputation with another recipe version, in the same transaction', async () => {
    const { rows: m } = await t.database.pool.query<{ pk: string; model_id: string; body: unknown }>(`
      select ms.id as pk, u.model_id, r.body from measurements ms join units u on u.id = ms.unit_id
        join models mo on mo.id = u.model_id join recipes r on r.id = mo.active_recipe_id
       order by ms.received_at limit 1`);
    const { rows: v } = await t.database.pool.query<{ id: string }>(
      `insert into recipes (model_id, version, status, body, released_at, retired_at)
       values ($1, 99, 'retired', $2, now(), now()) returning id`,
      [m[0].model_id, JSON.stringify(m[0].body)],
    );
    const engineer = await t.database.pool.query<{ id: string }>(
      `select id from users where username = 'evan.engineer'`,
    );
    const ctx = { db: t.deps.db, pool: t.deps.pool, queue: t.deps.queue, clock: t.deps.clock };
    const { calibrationId } = await computeCalibration(ctx, {
      measurementPk: m[0].pk,
      recipeId: v[0].id,
      recompute: { requestedBy: engineer.rows[0].id, reason: 'check the statistics copy' },
    });
    const { rows } = await t.database.pool.query(
      `select purpose::text, recipe_version from calibration_stats where calibration_id = $1`,
      [calibrationId],
    );
    expect(rows).toEqual([{ purpose: 'recompute', recipe_version: 99 }]);
    const { expected, stored } = await expectedAndStored();
    expect(stored).toEqual(expected);
  });

  it('follows a unit whose lots are corrected after it was calibrated, though the app may not write it', async () => {
    const { rows: u } = await t.database.pool.query<{ unit_id: string }>(
      `select unit_id from calibration_stats group by unit_id having count(*) >= 1 order by unit_id limit 1`,
    );
    // As the app role (what the server connects as).
    await t.database.pool.query(
      `update units set hall_board_lot = 'HB-CORRECTED', stator_lot = null where id = $1`,
      [u[0].unit_id],
    );
    const { rows } = await t.database.pool.query(
      `select distinct hall_board_lot, stator_lot from calibration_stats where unit_id = $1`,
      [u[0].unit_id],
    );
    expect(rows).toEqual([{ hall_board_lot: 'HB-CORRECTED', stator_lot: null }]);
    const { expected, stored } = await expectedAndStored();
    expect(stored).toEqual(expected);
    await expect(
      t.database.pool.query(`update calibration_stats set offset_deg = 0 where unit_id = $1`, [u[0].unit_id]),
    ).rejects.toMatchObject({ code: '42501' });
  });
});
