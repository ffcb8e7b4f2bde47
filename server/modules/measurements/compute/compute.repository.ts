import type pg from 'pg';
import { namedStatement } from '#server/db/statement';
import { prepared } from '#server/db/prepared';
import { jobInsertSql } from '#jobs/queue-client';
import type { Measurement } from '#shared/schemas/measurement';
import type { CalibrationRecord } from '#server/modules/calibrations/calibrations.table';
import type { UnitRecord } from '#server/modules/units/units.table';

/**
 * The computation's statements. Each does several things in one round trip on purpose (a round trip
 * costs more than the engine): the calibration, the unit's new state, the follow-on jobs and the events
 * commit in one statement. Nothing else builds SQL on the units table for a calibration.
 */

export interface MeasurementToCompute {
  id: string;
  measurement_id: string;
  station_id: string;
  unit_id: string;
  serial: string;
  source: 'timings' | 'capture';
  payload: Measurement;
  payload_raw: string | null;
  /** The calibration of this (measurement, recipe, engine) when the job ran before. */
  done_id: string | null;
  /** The unit's attempts and serial as the claim read them (unlocked: the commit checks they still hold). */
  unit_attempts: number;
  unit_serial: string;
}

/**
 * The measurements of a batch of jobs, each with its unit's attempts so far, whether its job already ran, and
 * its "computing" event, in one statement (a round trip costs more than the engine). Posted timings come as
 * their posted text when that text is the canonical one (its SHA-256 is the stored hash of the canonical text,
 * which the JSONB `payload` holds parsed): PostgreSQL then only decompresses the text instead of writing the
 * JSONB out as text again, number by number (about five times the CPU). Any other body comes as `payload`.
 * `at` is the job's place in the batch (from 1); a job whose measurement does not exist has no row.
 */
const claimStatement = namedStatement<{
  measurementPks: string[];
  recipeIds: string[];
  engineVersion: string;
  eventsChannel: string;
  atText: string;
}>(
  `with j as (select * from unnest($measurementPks::uuid[], $recipeIds::uuid[]) with ordinality as j(pk, recipe_id, at))
     select j.at::int as at, m.id, m.measurement_id, m.station_id, m.unit_id, m.serial, m.source,
            case when not k.canonical then m.payload end as payload,
            case when m.source = 'capture' or k.canonical then m.payload_raw end as payload_raw,
            k.canonical as raw_is_canonical,
            d.id as done_id, u.attempts as unit_attempts, u.serial as unit_serial,
            case when d.id is null then pg_notify($eventsChannel, json_build_object(
              'type', 'calibration.computing', 'stationId', m.station_id, 'unitId', m.unit_id,
              'serial', m.serial, 'measurementId', m.measurement_id, 'at', $atText::text)::text) end as notified
       from j join measurements m on m.id = j.pk join units u on u.id = m.unit_id
            left join lateral (select id from calibrations
                                where measurement_pk = j.pk and recipe_id = j.recipe_id
                                  and engine_version = $engineVersion limit 1) d on true
            cross join lateral (select m.source = 'timings'
              and encode(sha256(convert_to(m.payload_raw, 'UTF8')), 'hex') = m.payload_sha256 as canonical) k
      order by j.at`,
);

/** One job's measurement to compute (see `claimMeasurements`). */
export interface ClaimRequest {
  measurementPk: string;
  recipeId: string;
}

/**
 * Claims the measurements of a batch of jobs in one statement; the answer is in the jobs' order, undefined
 * for a job whose measurement does not exist.
 */
export async function claimMeasurements(
  pool: pg.Pool,
  jobs: readonly ClaimRequest[],
  values: { engineVersion: string; eventsChannel: string; atText: string },
): Promise<(MeasurementToCompute | undefined)[]> {
  const { rows } = await pool.query<
    Omit<MeasurementToCompute, 'payload'> & {
      at: number;
      payload: Measurement | null;
      raw_is_canonical: boolean;
    }
  >(
    claimStatement({
      ...values,
      measurementPks: jobs.map((j) => j.measurementPk),
      recipeIds: jobs.map((j) => j.recipeId),
    }),
  );
  const out: (MeasurementToCompute | undefined)[] = jobs.map(() => undefined);
  for (const r of rows) {
    const { raw_is_canonical, payload, at, ...rest } = r;
    out[at - 1] = raw_is_canonical
      ? { ...rest, payload: JSON.parse(r.payload_raw!) as Measurement, payload_raw: null }
      : { ...rest, payload: payload! };
  }
  return out;
}

/** The unit's counters, locked until the transaction ends (one calibration of a unit at a time). */
export async function lockUnitForCalibration(
  client: pg.PoolClient,
  unitId: string,
): Promise<{ attempts: number; status: UnitRecord['status']; serial: string }> {
  const { rows } = await client.query<{ attempts: number; status: UnitRecord['status']; serial: string }>(
    prepared('select attempts, status, serial from units where id = $1 for update', [unitId]),
  );
  return rows[0];
}

/** Everything a station calibration's commit writes, by name. */
export interface StationCalibrationCommit {
  // The calibration row.
  measurementPk: string;
  recipeId: string;
  unitId: string;
  stationId: string;
  engineVersion: string;
  verdict: CalibrationRecord['verdict'];
  offsetDeg: number | null;
  offsetCounts: number | null;
  attempt: number | null;
  /** The engine's result (or its input error) as JSON text. */
  resultJson: string;
  computeMs: number;
  computedAt: Date;
  // The unit, changed only when the calibration is new and `counts`.
  unitAttempts: number;
  unitStatus: UnitRecord['status'];
  holdReason: string | null;
  /** A pass: the unit's current calibration and offset become this one's. */
  passed: boolean;
  /** The verdict counts as an attempt (not unusable input): the unit changes and the jobs are queued. */
  counts: boolean;
  // The commit event.
  eventsChannel: string;
  serial: string;
  measurementId: string;
  computedAtText: string;
  // The follow-on jobs: the traveler render (newest first) and the watched charts' update.
  wakeChannel: string;
  travelerQueue: string;
  travelerPriority: number;
  chartQueue: string;
  modelId: string;
  /** false for a queue that sends nothing (the demo seed). */
  sendsJobs: boolean;
  /**
   * The unit's attempts the new state was worked out from, when the statement runs on its own (no
   * transaction holding the unit's lock): nothing is written unless the unit still has them. null when
   * the caller's transaction has locked the unit already.
   */
  expectedAttempts: number | null;
}

/**
 * The calibration, the unit's status and the commit event in one statement; nothing changes (no row comes
 * back) if this (measurement, recipe) pair was computed meanwhile, or if the unit no longer has
 * `expectedAttempts` (another calibration of it committed since they were read). The unit's row is locked
 * first (`g`): a concurrent calibration of the same unit waits for this one's commit, and then finds the
 * attempts it expected gone (PostgreSQL re-checks a locked row's condition against its newest version).
 */
const commitStatement = namedStatement<StationCalibrationCommit>(
  `with g as (
         select id from units
          where id = $unitId and ($expectedAttempts::int is null or attempts = $expectedAttempts::int)
          for update
       ), c as (
         insert into calibrations (measurement_pk, recipe_id, unit_id, station_id, engine_version, verdict,
                                   offset_deg, offset_counts, attempt, result, compute_ms, computed_at)
         select $measurementPk, $recipeId, $unitId, $stationId, $engineVersion, $verdict,
                $offsetDeg, $offsetCounts, $attempt, $resultJson, $computeMs, $computedAt
          where exists (select 1 from g)
         on conflict do nothing returning id
       ), u as (
         update units set
           attempts = $unitAttempts, status = $unitStatus, hold_reason = $holdReason, updated_at = $computedAt,
           current_calibration_id = case when $passed then (select id from c) else current_calibration_id end,
           current_offset_deg = case when $passed then $offsetDeg else current_offset_deg end,
           current_offset_counts = case when $passed then $offsetCounts else current_offset_counts end,
           programming_mismatch = case when $passed then false else programming_mismatch end
         where id = $unitId and $counts and exists (select 1 from c)
         returning id
       ), tj as (
         ${jobInsertSql({
           queueParam: '$travelerQueue',
           dataSql: `jsonb_build_object('calibrationId', c.id)`,
           prioritySql: '$travelerPriority::int',
           fromSql: '(select id from c where $counts and $sendsJobs) c',
         })}
       ), cw as (
         ${jobInsertSql({
           queueParam: '$chartQueue',
           dataSql: `jsonb_build_object('stationId', $stationId::text, 'modelId', $modelId::text)`,
           fromSql: '(select id from c where $counts and $sendsJobs) c',
         })}
       )
       select c.id,
              pg_notify($eventsChannel, json_build_object('type', 'calibration.committed', 'stationId', $stationId::text,
                'unitId', $unitId::text, 'serial', $serial::text, 'measurementId', $measurementId::text, 'calibrationId', c.id,
                'verdict', $verdict::text, 'at', $computedAtText::text)::text),
              case when $counts and $sendsJobs then pg_notify($wakeChannel, $travelerQueue) end
         from c left join u on true`,
);

/**
 * Commits a station calibration (see `StationCalibrationCommit`): on a pool it is a transaction of its
 * own, on a client it joins that client's transaction. Its id, or undefined if nothing was written.
 */
export async function commitStationCalibration(
  client: pg.Pool | pg.PoolClient,
  values: StationCalibrationCommit,
): Promise<{ id: string } | undefined> {
  const { rows } = await client.query<{ id: string }>(commitStatement(values));
  return rows[0];
}
