import type pg from 'pg';
import { prepared } from '../../db/prepared';
import type { Measurement } from '../../../shared/schemas/measurement';
import { eq, sql } from 'drizzle-orm';
import type { DbOrTx } from '../../db/client';
import { measurements } from './measurements.table';

/** Which stored measurements a replay covers: one model, optionally a time range and stations. */
export interface ReplaySelection {
  modelId: string;
  from?: string;
  to?: string;
  stationIds?: string[];
  /** The most recent units (by their latest measurement in the selection). */
  lastUnits: number;
}

/**
 * The latest station measurement of each of the last `lastUnits` units of the model within the
 * selection, newest first (ids only; bodies are read in batches by `replayBatch`).
 */
export async function replayMeasurementIds(pool: pg.Pool, s: ReplaySelection): Promise<string[]> {
  const { rows } = await pool.query<{ id: string }>(
    `select id from (
        select distinct on (m.unit_id) m.id, m.received_at
          from measurements m join units u on u.id = m.unit_id
         where u.model_id = $1
           and ($2::timestamptz is null or m.received_at >= $2)
           and ($3::timestamptz is null or m.received_at <= $3)
           and ($4::uuid[] is null or m.station_id = any($4))
         order by m.unit_id, m.received_at desc) latest
      order by received_at desc
      limit $5`,
    [s.modelId, s.from ?? null, s.to ?? null, s.stationIds?.length ? s.stationIds : null, s.lastUnits],
  );
  return rows.map((r) => r.id);
}

export interface ReplayRow {
  id: string;
  measurementId: string;
  unitId: string;
  serial: string;
  receivedAt: Date;
  source: 'timings' | 'capture';
  payload: Measurement;
  /** The capture's CSV text (null for posted timings: the JSON is the measurement). */
  payloadRaw: string | null;
  /** The station's own calibration with `baselineRecipeId` and this engine, when there is one. */
  baseline: {
    verdict: 'pass' | 'fail' | 'unusable';
    offsetDeg: number | null;
    /** Codes of the checks that failed. */
    failedChecks: string[];
  } | null;
}

/** Bodies of the given measurements, with the station calibration by the baseline version if stored. */
export async function replayBatch(
  pool: pg.Pool,
  ids: string[],
  baselineRecipeId: string,
  engineVersion: string,
): Promise<ReplayRow[]> {
  const { rows } = await pool.query(
    prepared(
      `select m.id, m.measurement_id, m.unit_id, m.serial, m.received_at, m.source, m.payload,
              case when m.source = 'capture' then m.payload_raw end as payload_raw,
              c.verdict as base_verdict, c.offset_deg as base_offset,
              array(select x->>'code' from jsonb_array_elements(c.result->'checks') x
                     where x->>'passed' = 'false') as base_failed
         from measurements m
         left join calibrations c on c.measurement_pk = m.id and c.recipe_id = $2 and c.engine_version = $3
                                 and c.purpose = 'station'
        where m.id = any($1::uuid[])`,
      [ids, baselineRecipeId, engineVersion],
    ),
  );
  return rows.map((r) => ({
    id: r.id,
    measurementId: r.measurement_id,
    unitId: r.unit_id,
    serial: r.serial,
    receivedAt: r.received_at,
    source: r.source,
    payload: r.payload,
    payloadRaw: r.payload_raw,
    baseline: r.base_verdict
      ? { verdict: r.base_verdict, offsetDeg: r.base_offset, failedChecks: r.base_failed ?? [] }
      : null,
  }));
}

/**
 * A stored measurement exactly as kept (canonical body, the text as posted, its SHA-256) with the
 * recipe version of its newest station calibration (null while it is computing).
 */
export async function storedMeasurement(db: DbOrTx, measurementId: string) {
  const [row] = await db
    .select({
      measurementId: measurements.measurementId,
      serial: measurements.serial,
      source: measurements.source,
      payload: measurements.payload,
      payloadRaw: measurements.payloadRaw,
      payloadSha256: measurements.payloadSha256,
      receivedAt: measurements.receivedAt,
      recipeId: sql<
        string | null
      >`(select c.recipe_id from calibrations c where c.measurement_pk = "measurements"."id"
        and c.purpose = 'station' order by c.computed_at desc limit 1)`,
    })
    .from(measurements)
    .where(eq(measurements.measurementId, measurementId));
  return row;
}

/** Production measurements a station has posted since an instant (qualification counts units by this). */
export async function countStationMeasurementsSince(
  pool: pg.Pool,
  stationId: string,
  since: Date,
): Promise<number> {
  const { rows } = await pool.query<{ n: number }>(
    prepared('select count(*)::int as n from measurements where station_id = $1 and received_at > $2', [
      stationId,
      since,
    ]),
  );
  return rows[0].n;
}
