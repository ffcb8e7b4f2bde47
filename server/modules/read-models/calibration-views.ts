import { and, desc, eq, inArray, sql, type SQL } from 'drizzle-orm';
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
  return rows.map((r) => {
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
  });
}
