import type pg from 'pg';
import { namedStatement } from '#server/db/statement';
import { jobInsertSql } from '#jobs/queue-client';
import type { UnitRecord } from '#server/modules/units/units.table';
import {
  productionFactsSql,
  type ProductionFacts,
} from '#server/modules/qualification/qualification.service';

/**
 * The station intake's statements. They read and write the units, stations and models beside the
 * measurement in one round trip each on purpose (decision 37): the intake is the line's hot path and a
 * round trip costs more than the work. Nothing else in the product builds SQL on those tables.
 */

/** Everything the intake rules (and the qualification gate in front of them) need about one post, gathered in one statement. */
export interface IntakeContext extends ProductionFacts {
  station_name: string;
  allowed_model_ids: string[];
  attended_by: string | null;
  unit_id: string | null;
  unit_serial: string | null;
  unit_status: UnitRecord['status'] | null;
  hold_reason: string | null;
  model_id: string | null;
  model_code: string | null;
  active_recipe_id: string | null;
  ex_id: string | null;
  ex_measurement_id: string | null;
  ex_station_id: string | null;
  ex_serial: string | null;
  ex_sha256: string | null;
  ex_computed: boolean | null;
}

/**
 * A repeat of this id, the station, the unit (if known) and its model (or the station's only model), and
 * the qualification gate's facts (the qualification module's SQL).
 */
const intakeContextStatement = namedStatement<{
  stationId: string;
  serialKey: string;
  measurementId: string;
}>(
  `select s.name as station_name, s.allowed_model_ids, s.attended_by,
            u.id as unit_id, u.serial as unit_serial, u.status as unit_status, u.hold_reason,
            mo.id as model_id, mo.code as model_code, mo.active_recipe_id,
            ex.id as ex_id, ex.measurement_id as ex_measurement_id, ex.station_id as ex_station_id,
            ex.serial as ex_serial, ex.payload_sha256 as ex_sha256,
            exists (select 1 from calibrations c where c.measurement_pk = ex.id) as ex_computed,
            ${productionFactsSql('$stationId', '$serialKey')}
       from stations s
       left join units u on upper(u.serial) = $serialKey
       left join models mo on mo.id = coalesce(u.model_id,
            case when jsonb_array_length(s.allowed_model_ids) = 1 then (s.allowed_model_ids->>0)::uuid end)
       left join measurements ex on ex.measurement_id = $measurementId
      where s.id = $stationId`,
);

export async function intakeContext(
  pool: pg.Pool,
  key: { stationId: string; serialKey: string; measurementId: string },
): Promise<IntakeContext> {
  const { rows } = await pool.query<IntakeContext>(intakeContextStatement(key));
  return rows[0];
}

/** The values of one stored measurement (the columns of `measurements`). */
interface MeasurementRowValues {
  measurementId: string;
  stationId: string;
  source: 'timings' | 'capture';
  /** The zod-parsed body serialised in the schema's key order (JSONB). */
  canonical: string;
  /**
   * The body's text exactly as posted; null when it is `canonical` itself (the usual case: the text then
   * travels to PostgreSQL once, not twice).
   */
  raw: string | null;
  /** SHA-256 of `canonical`. */
  digest: string;
  operatorId: string | null;
  receivedAt: Date;
}

/**
 * The usual intake in one statement, its own transaction: the unit registered if new, the measurement
 * stored, its computation queued (when the queue sends), the worker woken and the event sent. No row
 * comes back when a concurrent post won a race (the same serial first seen at two stations, or the same
 * measurement posted twice at once).
 */
const storeMeasurementStatement = namedStatement<
  MeasurementRowValues & {
    /** The known unit, or null to register `serialKey` as a unit of `modelId`. */
    unitId: string | null;
    unitSerial: string | null;
    serialKey: string;
    modelId: string;
    computeQueue: string;
    recipeId: string;
    wakeChannel: string;
    eventsChannel: string;
    receivedAtText: string;
    /** false for a queue that sends nothing (the demo seed computes in-process). */
    sendsJobs: boolean;
  }
>(
  `with nu as (
         insert into units (serial, model_id) select $serialKey, $modelId where $unitId::uuid is null
         on conflict do nothing returning id, serial
       ), u as (
         select id, serial from nu
         union all select $unitId::uuid, $unitSerial where $unitId::uuid is not null
       ), m as (
         insert into measurements (measurement_id, station_id, unit_id, serial, source, payload, payload_raw,
                                   payload_sha256, operator_id, received_at)
         select $measurementId, $stationId, u.id, u.serial, $source, $canonical::text::jsonb, coalesce($raw::text, $canonical::text), $digest, $operatorId, $receivedAt from u
         on conflict do nothing returning id, measurement_id, unit_id, serial
       ), j as (
         ${jobInsertSql({
           queueParam: '$computeQueue',
           dataSql: `jsonb_build_object('measurementPk', m.id, 'recipeId', $recipeId::text)`,
           fromSql: '(select id from m where $sendsJobs) m',
         })}
       )
       select m.id, m.measurement_id, m.unit_id, m.serial,
              case when $sendsJobs then pg_notify($wakeChannel, $computeQueue) end,
              pg_notify($eventsChannel, json_build_object('type', 'measurement.received', 'stationId', $stationId::text,
                'unitId', m.unit_id, 'serial', m.serial, 'measurementId', m.measurement_id, 'at', $receivedAtText::text)::text),
              -- A measurement is never stored without its job: no queue, no commit (the cast fails; it
              -- names a column of m so the planner cannot fold it into a constant and fail every time).
              case when exists (select 1 from j) or not $sendsJobs then 0
                   else ('no job queue ' || $computeQueue || ' for measurement ' || m.id::text || ': run the migrations')::int
              end as queued
         from m`,
);

export async function storeMeasurementInOneTrip(
  pool: pg.Pool,
  values: Parameters<typeof storeMeasurementStatement>[0],
): Promise<{ id: string; measurement_id: string; unit_id: string; serial: string } | undefined> {
  const { rows } = await pool.query<{ id: string; measurement_id: string; unit_id: string; serial: string }>(
    storeMeasurementStatement(values),
  );
  return rows[0];
}

const insertMeasurementStatement = namedStatement<MeasurementRowValues & { unitId: string; serial: string }>(
  `insert into measurements (measurement_id, station_id, unit_id, serial, source, payload, payload_raw,
                                   payload_sha256, operator_id, received_at)
         values ($measurementId, $stationId, $unitId, $serial, $source, $canonical::text::jsonb, coalesce($raw::text, $canonical::text), $digest, $operatorId, $receivedAt)
         on conflict do nothing returning id, measurement_id, received_at`,
);

/** Stores a measurement of a known unit inside an open transaction; undefined when its id is taken. */
export async function insertMeasurement(
  client: pg.PoolClient,
  values: Parameters<typeof insertMeasurementStatement>[0],
): Promise<{ id: string; measurementId: string; receivedAt: Date } | undefined> {
  const { rows } = await client.query<{ id: string; measurement_id: string; received_at: Date }>(
    insertMeasurementStatement(values),
  );
  return rows[0]
    ? { id: rows[0].id, measurementId: rows[0].measurement_id, receivedAt: rows[0].received_at }
    : undefined;
}
