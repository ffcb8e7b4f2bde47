import { and, desc, eq, inArray, sql, type AnyColumn, type SQL } from 'drizzle-orm';
import type { DbOrTx } from '#server/db/client';
import { ENGINE_VERSION } from '#shared/calibration';
import { calibrations, programmingConfirmations, type CalibrationRecord } from './calibrations.table';

/**
 * Queries on the calibrations module's own tables (calibrations, programming confirmations). Reads that
 * join calibrations with units, stations, recipes or measurements in one statement are in
 * `server/modules/read-models` (see DEVELOPERS.md, "Read models").
 */

/** The newest calibration of a stored measurement (any purpose), or undefined while none exists. */
export async function latestCalibrationOfMeasurement(
  db: DbOrTx,
  measurementPk: string,
): Promise<CalibrationRecord | undefined> {
  const [row] = await db
    .select()
    .from(calibrations)
    .where(eq(calibrations.measurementPk, measurementPk))
    .orderBy(desc(calibrations.computedAt))
    .limit(1);
  return row;
}

/** The calibration of (measurement, recipe version, this engine), if it was computed already. */
export async function calibrationOfKey(
  db: DbOrTx,
  key: { measurementPk: string; recipeId: string },
): Promise<{ id: string } | undefined> {
  const [row] = await db
    .select({ id: calibrations.id })
    .from(calibrations)
    .where(
      and(
        eq(calibrations.measurementPk, key.measurementPk),
        eq(calibrations.recipeId, key.recipeId),
        eq(calibrations.engineVersion, ENGINE_VERSION),
      ),
    );
  return row;
}

/** Adds a calibration row unless its (measurement, recipe version, engine) exists; its id, or undefined. */
export async function insertCalibration(
  db: DbOrTx,
  row: typeof calibrations.$inferInsert,
): Promise<{ id: string } | undefined> {
  const [inserted] = await db
    .insert(calibrations)
    .values(row)
    .onConflictDoNothing()
    .returning({ id: calibrations.id });
  return inserted;
}

/**
 * The containment search's condition on a unit's station calibrations: some station calibration of
 * the unit (correlated on `unitId`) matches every given filter. Undefined when no filter is given.
 */
export function stationCalibrationFilter(
  unitId: AnyColumn,
  f: {
    stationId?: string;
    operatorId?: string;
    measuredFrom?: string;
    measuredTo?: string;
    recipeId?: string;
    engineVersion?: string;
    verdict?: 'pass' | 'fail' | 'unusable';
    offsetMinDeg?: number;
    offsetMaxDeg?: number;
    failedCheck?: string;
  },
): SQL | undefined {
  const conds: SQL[] = [];
  if (f.stationId) conds.push(sql`c.station_id = ${f.stationId}`);
  if (f.measuredFrom) conds.push(sql`c.computed_at >= ${f.measuredFrom}`);
  if (f.measuredTo) conds.push(sql`c.computed_at <= ${f.measuredTo}`);
  if (f.recipeId) conds.push(sql`c.recipe_id = ${f.recipeId}`);
  if (f.engineVersion) conds.push(sql`c.engine_version = ${f.engineVersion}`);
  if (f.verdict) conds.push(sql`c.verdict = ${f.verdict}`);
  if (f.offsetMinDeg !== undefined) conds.push(sql`c.offset_deg >= ${f.offsetMinDeg}`);
  if (f.offsetMaxDeg !== undefined) conds.push(sql`c.offset_deg <= ${f.offsetMaxDeg}`);
  if (f.failedCheck)
    conds.push(
      sql`c.result->'checks' @> jsonb_build_array(jsonb_build_object('code', ${f.failedCheck}::text, 'passed', false))`,
    );
  if (f.operatorId)
    conds.push(
      sql`exists (select 1 from measurements m where m.id = c.measurement_pk and m.operator_id = ${f.operatorId})`,
    );
  if (conds.length === 0) return undefined;
  return sql`exists (select 1 from calibrations c where c.unit_id = ${unitId} and c.purpose = 'station' and ${sql.join(conds, sql` and `)})`;
}

/** Whether the station measured the unit at least once (a station reads only its own units' papers). */
export async function stationMeasuredUnit(db: DbOrTx, stationId: string, unitId: string): Promise<boolean> {
  const [own] = await db
    .select({ id: calibrations.id })
    .from(calibrations)
    .where(and(eq(calibrations.unitId, unitId), eq(calibrations.stationId, stationId)))
    .limit(1);
  return !!own;
}

export async function calibrationById(db: DbOrTx, id: string): Promise<CalibrationRecord | undefined> {
  const [row] = await db.select().from(calibrations).where(eq(calibrations.id, id));
  return row;
}

/** The unit's newest station calibration with a verdict (pass or fail): the one its traveler shows. */
export async function latestJudgedCalibrationOfUnit(
  db: DbOrTx,
  unitId: string,
): Promise<CalibrationRecord | undefined> {
  const [row] = await db
    .select()
    .from(calibrations)
    .where(
      and(
        eq(calibrations.unitId, unitId),
        eq(calibrations.purpose, 'station'),
        inArray(calibrations.verdict, ['pass', 'fail']),
      ),
    )
    .orderBy(desc(calibrations.computedAt))
    .limit(1);
  return row;
}

/** Calibrations by verdict, the first and last computed (as text), and programming confirmations. */
export async function calibrationCounts(db: DbOrTx) {
  const byVerdict = await db
    .select({ verdict: calibrations.verdict, n: sql<number>`count(*)::int` })
    .from(calibrations)
    .groupBy(calibrations.verdict);
  const [span] = await db
    .select({
      first: sql<string | null>`min(${calibrations.computedAt})::text`,
      last: sql<string | null>`max(${calibrations.computedAt})::text`,
    })
    .from(calibrations);
  const [confirmations] = await db
    .select({
      n: sql<number>`count(*)::int`,
      mismatches: sql<number>`count(*) filter (where not ${programmingConfirmations.matches})::int`,
    })
    .from(programmingConfirmations);
  return { byVerdict, span, confirmations };
}

/** Every programming confirmation (write and read-back) of the given calibrations, oldest first. */
export async function programmingOfCalibrations(db: DbOrTx, calibrationIds: string[]) {
  if (calibrationIds.length === 0) return [];
  return db
    .select()
    .from(programmingConfirmations)
    .where(inArray(programmingConfirmations.calibrationId, calibrationIds))
    .orderBy(programmingConfirmations.confirmedAt);
}
