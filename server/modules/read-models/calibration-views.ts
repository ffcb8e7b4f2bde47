import type pg from 'pg';
import { and, desc, eq, inArray, sql, type SQL } from 'drizzle-orm';
import { namedStatement } from '#server/db/statement';
import type { DbOrTx } from '#server/db/client';
import type { CalibrationView } from '#shared/schemas/calibrations';
import type { CalibrationResult } from '#shared/schemas/calibration-result';
import { calibrations } from '../calibrations/calibrations.table';
import { nextActionFor } from '../calibrations/next-action';
import { measurements } from '../measurements/measurements.table';
import { recipes } from '../recipes/recipes.table';
import { stations } from '../stations/stations.table';
import { units } from '../units/units.table';

/**
 * The calibrations' typed query: by unit, by station, by measurement, and the filters the statistics and
 * containment screens extend (model, lots, recipe version, time range, verdict, purpose), a page at a time
 * (newest first; `before` is the last row of the previous page).
 */
export interface CalibrationQuery {
  unitId?: string;
  stationId?: string;
  /** The station's idempotency key of the measurement. */
  measurementId?: string;
  purpose?: 'station' | 'recompute';
  modelId?: string;
  hallBoardLot?: string;
  magnetRingLot?: string;
  statorLot?: string;
  recipeVersions?: number[];
  /** Computed at or after. */
  from?: Date;
  /** Computed before. */
  to?: Date;
  verdicts?: ('pass' | 'fail' | 'unusable')[];
  before?: { computedAt: Date; id: string };
  /** Rows per page; 50 when not given. */
  limit?: number;
}

function whereOf(q: CalibrationQuery): SQL[] {
  const out: (SQL | undefined)[] = [
    q.unitId !== undefined ? eq(calibrations.unitId, q.unitId) : undefined,
    q.stationId !== undefined ? eq(calibrations.stationId, q.stationId) : undefined,
    q.measurementId !== undefined ? eq(measurements.measurementId, q.measurementId) : undefined,
    q.purpose ? eq(calibrations.purpose, q.purpose) : undefined,
    q.modelId ? eq(units.modelId, q.modelId) : undefined,
    q.hallBoardLot ? eq(units.hallBoardLot, q.hallBoardLot) : undefined,
    q.magnetRingLot ? eq(units.magnetRingLot, q.magnetRingLot) : undefined,
    q.statorLot ? eq(units.statorLot, q.statorLot) : undefined,
    q.recipeVersions ? inArray(recipes.version, q.recipeVersions) : undefined,
    q.from ? sql`${calibrations.computedAt} >= ${q.from.toISOString()}` : undefined,
    q.to ? sql`${calibrations.computedAt} < ${q.to.toISOString()}` : undefined,
    q.verdicts ? inArray(calibrations.verdict, q.verdicts) : undefined,
    q.before
      ? sql`(${calibrations.computedAt}, ${calibrations.id}) < (${q.before.computedAt.toISOString()}, ${q.before.id})`
      : undefined,
  ];
  return out.filter((c): c is SQL => c !== undefined);
}

interface ConfirmationJson {
  matches: boolean;
  expected_counts: number;
  written_counts: number;
  read_back_counts: number;
  checksum: string | null;
  confirmed_at: string;
}

/**
 * Builds the views of calibrations (newest first) matching `where`, in one query: the unit's newest
 * calibration and the latest programming confirmation come from subqueries, and the raw measurement
 * body is not read.
 */
export async function calibrationViews(db: DbOrTx, q: CalibrationQuery = {}): Promise<CalibrationView[]> {
  const rows = await db
    .select({
      cal: calibrations,
      measurementId: measurements.measurementId,
      receivedAt: measurements.receivedAt,
      recipeVersion: recipes.version,
      recipeBody: recipes.body,
      stationName: stations.name,
      unitSerial: units.serial,
      unitStatus: units.status,
      unitHoldReason: units.holdReason,
      newestOfUnit: sql<string>`(select c2.id from calibrations c2 where c2.unit_id = ${calibrations.unitId}
        and c2.purpose = 'station' order by c2.computed_at desc limit 1)`,
      confirmation: sql<ConfirmationJson | null>`(select row_to_json(p) from (
        select matches, expected_counts, written_counts, read_back_counts, checksum,
               to_char(confirmed_at at time zone 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"') as confirmed_at
          from programming_confirmations pc where pc.calibration_id = ${calibrations.id}
         order by pc.confirmed_at desc limit 1) p)`,
    })
    .from(calibrations)
    .innerJoin(measurements, eq(measurements.id, calibrations.measurementPk))
    .innerJoin(recipes, eq(recipes.id, calibrations.recipeId))
    .innerJoin(stations, eq(stations.id, calibrations.stationId))
    .innerJoin(units, eq(units.id, calibrations.unitId))
    .where(and(...whereOf(q)))
    // Newest first; a page after a cursor also orders by id, so equal instants split the same way each time.
    .orderBy(
      ...(q.before
        ? [desc(calibrations.computedAt), desc(calibrations.id)]
        : [desc(calibrations.computedAt)]),
    )
    .limit(q.limit ?? 50);
  return rows.map(viewOf);
}

/** What a view is made of: the calibration's columns and the few of its neighbours it shows. */
interface ViewRow {
  cal: Pick<
    typeof calibrations.$inferSelect,
    | 'id'
    | 'stationId'
    | 'recipeId'
    | 'engineVersion'
    | 'verdict'
    | 'purpose'
    | 'reason'
    | 'offsetDeg'
    | 'offsetCounts'
    | 'attempt'
    | 'result'
    | 'computeMs'
    | 'computedAt'
  >;
  measurementId: string;
  receivedAt: Date;
  recipeVersion: number;
  recipeBody: { name?: string | null; maxAttempts: number };
  stationName: string;
  unitSerial: string;
  unitStatus: string;
  unitHoldReason: string | null;
  newestOfUnit: string | null;
  confirmation: ConfirmationJson | null;
}

function viewOf(r: ViewRow): CalibrationView {
  const isError = 'error' in r.cal.result;
  const conf = r.confirmation;
  return {
    calibrationId: r.cal.id,
    measurementId: r.measurementId,
    serial: r.unitSerial,
    stationId: r.cal.stationId,
    stationName: r.stationName,
    recipe: { id: r.cal.recipeId, version: r.recipeVersion, name: r.recipeBody.name ?? null },
    engineVersion: r.cal.engineVersion,
    verdict: r.cal.verdict,
    purpose: r.cal.purpose,
    reason: r.cal.reason,
    offsetDeg: r.cal.offsetDeg,
    offsetCounts: r.cal.offsetCounts,
    attempt: r.cal.attempt,
    maxAttempts: r.recipeBody.maxAttempts,
    computedAt: r.cal.computedAt.toISOString(),
    receivedAt: r.receivedAt.toISOString(),
    computeMs: r.cal.computeMs,
    nextAction:
      r.cal.purpose === 'recompute'
        ? 'A recomputation for analysis: it does not change the unit or what is programmed into it.'
        : nextActionFor(
            r.cal.verdict,
            r.cal.attempt,
            r.recipeBody.maxAttempts,
            // A hold the unit is under now matters for its newest calibration, not for its history.
            r.unitStatus === 'on_hold' && r.newestOfUnit === r.cal.id
              ? (r.unitHoldReason ?? 'no reason given')
              : null,
            isError ? [] : (r.cal.result as CalibrationResult).checks,
          ),
    result: isError ? null : (r.cal.result as CalibrationResult),
    error: isError ? (r.cal.result as { error: CalibrationView['error'] }).error : null,
    programming: conf
      ? {
          status: conf.matches ? 'confirmed' : 'mismatch',
          expectedCounts: conf.expected_counts,
          writtenCounts: conf.written_counts,
          readBackCounts: conf.read_back_counts,
          checksum: conf.checksum,
          confirmedAt: conf.confirmed_at,
        }
      : {
          status: 'pending',
          expectedCounts: r.cal.offsetCounts,
          writtenCounts: null,
          readBackCounts: null,
          checksum: null,
          confirmedAt: null,
        },
  };
}

/**
 * A station's measurement and the view of its newest station calibration (none while it computes), by
 * the station's idempotency key: what the result long-poll answers, in one statement. It is the line's
 * hottest read (once or twice a unit), so it is a named prepared statement: PostgreSQL plans it once per
 * connection instead of on every call (planning this join cost several times its execution), and no
 * query is built per call. The view is the same as `calibrationViews({ measurementId, purpose: 'station' })`.
 */
const stationResultStatement = namedStatement<{ measurementId: string }>(
  `select m.station_id as measurement_station_id, m.measurement_id, m.received_at,
          c.id, c.station_id, c.recipe_id, c.engine_version, c.verdict, c.purpose, c.reason, c.offset_deg,
          c.offset_counts, c.attempt, c.result, c.compute_ms, c.computed_at,
          r.version as recipe_version, r.body->'name' as recipe_name, r.body->'maxAttempts' as max_attempts,
          s.name as station_name, u.serial as unit_serial, u.status as unit_status, u.hold_reason,
          (select c2.id from calibrations c2 where c2.unit_id = c.unit_id and c2.purpose = 'station'
            order by c2.computed_at desc limit 1) as newest_of_unit,
          (select row_to_json(p) from (
             select matches, expected_counts, written_counts, read_back_counts, checksum,
                    to_char(confirmed_at at time zone 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"') as confirmed_at
               from programming_confirmations pc where pc.calibration_id = c.id
              order by pc.confirmed_at desc limit 1) p) as confirmation
     from measurements m
     left join lateral (
       select * from calibrations c where c.measurement_pk = m.id and c.purpose = 'station'
        order by c.computed_at desc limit 1) c on true
     left join recipes r on r.id = c.recipe_id
     left join stations s on s.id = c.station_id
     left join units u on u.id = c.unit_id
    where m.measurement_id = $measurementId`,
);

interface StationResultRow {
  measurement_station_id: string;
  measurement_id: string;
  received_at: Date;
  id: string | null;
  station_id: string;
  recipe_id: string;
  engine_version: string;
  verdict: ViewRow['cal']['verdict'];
  purpose: ViewRow['cal']['purpose'];
  reason: string | null;
  offset_deg: number | null;
  offset_counts: number | null;
  attempt: number | null;
  result: ViewRow['cal']['result'];
  compute_ms: number | null;
  computed_at: Date;
  recipe_version: number;
  recipe_name: string | null;
  max_attempts: number;
  station_name: string;
  unit_serial: string;
  unit_status: string;
  hold_reason: string | null;
  newest_of_unit: string | null;
  confirmation: ConfirmationJson | null;
}

/**
 * The station that posted a measurement and the view of its station calibration (null while it
 * computes); undefined when no measurement has this id.
 */
export async function stationResultView(
  pool: pg.Pool,
  measurementId: string,
): Promise<{ stationId: string; view: CalibrationView | null } | undefined> {
  const { rows } = await pool.query<StationResultRow>(stationResultStatement({ measurementId }));
  const r = rows[0];
  if (!r) return undefined;
  if (r.id === null) return { stationId: r.measurement_station_id, view: null };
  return {
    stationId: r.measurement_station_id,
    view: viewOf({
      cal: {
        id: r.id,
        stationId: r.station_id,
        recipeId: r.recipe_id,
        engineVersion: r.engine_version,
        verdict: r.verdict,
        purpose: r.purpose,
        reason: r.reason,
        offsetDeg: r.offset_deg,
        offsetCounts: r.offset_counts,
        attempt: r.attempt,
        result: r.result,
        computeMs: r.compute_ms,
        computedAt: r.computed_at,
      },
      measurementId: r.measurement_id,
      receivedAt: r.received_at,
      recipeVersion: r.recipe_version,
      recipeBody: { name: r.recipe_name, maxAttempts: r.max_attempts },
      stationName: r.station_name,
      unitSerial: r.unit_serial,
      unitStatus: r.unit_status,
      unitHoldReason: r.hold_reason,
      newestOfUnit: r.newest_of_unit,
      confirmation: r.confirmation,
    }),
  };
}
