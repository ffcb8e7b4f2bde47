import type pg from 'pg';
import { namedStatement } from '#server/db/statement';

/**
 * The programming confirmation's statements: a matching confirmation read and written in one statement;
 * a mismatch written with the unit's flag, the audit entry and the event in one atomic statement (its hold
 * beside it, in the caller's transaction).
 */

/** What the confirmation statements read about the measurement. */
export interface MeasurementToConfirm {
  station_id: string;
  cal_id: string | null;
  unit_id: string | null;
  offset_counts: number | null;
  serial: string;
}

/**
 * The usual confirmation in one statement, its own transaction: the measurement's newest calibration is
 * read, and only when it belongs to `stationId`, is computed with counts, and both values the station
 * sent equal its counts is the confirmation recorded (the unit's flag cleared if it is the unit's current
 * calibration) and the `programming.confirmed` event sent. The row read always comes back, with
 * `recorded` saying whether it was; no row when the measurement does not exist.
 */
const confirmMatchStatement = namedStatement<{
  measurementId: string;
  stationId: string;
  writtenCounts: number;
  readBackCounts: number;
  checksum: string | null;
  confirmedAt: Date;
  atText: string;
  eventsChannel: string;
}>(
  `with m as (
       select m.station_id, m.serial, c.id as cal_id, c.unit_id, c.offset_counts
         from measurements m
         left join lateral (select id, unit_id, offset_counts from calibrations
                             where measurement_pk = m.id order by computed_at desc limit 1) c on true
        where m.measurement_id = $measurementId
     ), ok as (
       select * from m
        where station_id = $stationId::uuid and cal_id is not null
          and offset_counts = $writtenCounts::int and offset_counts = $readBackCounts::int
     ), p as (
       insert into programming_confirmations (calibration_id, unit_id, station_id, expected_counts,
                                              written_counts, read_back_counts, checksum, matches, confirmed_at)
       select cal_id, unit_id, station_id, offset_counts, $writtenCounts::int, $readBackCounts::int,
              $checksum, true, $confirmedAt from ok returning id
     ), u as (
       update units set programming_mismatch = false, updated_at = $confirmedAt
        from ok where units.id = ok.unit_id and units.current_calibration_id = ok.cal_id and exists (select 1 from p)
        returning units.id
     )
     select m.*, exists (select 1 from p) as recorded,
            case when exists (select 1 from p) then pg_notify($eventsChannel, json_build_object(
              'type', 'programming.confirmed', 'stationId', m.station_id, 'unitId', m.unit_id, 'serial', m.serial,
              'calibrationId', m.cal_id, 'matches', true, 'at', $atText::text)::text) end as notified
       from m`,
);

/** Records a matching confirmation in one statement (see the statement); what it read, or undefined. */
export async function confirmIfMatching(
  pool: pg.Pool,
  values: Parameters<typeof confirmMatchStatement>[0],
): Promise<(MeasurementToConfirm & { recorded: boolean }) | undefined> {
  const { rows } = await pool.query<MeasurementToConfirm & { recorded: boolean }>(
    confirmMatchStatement(values),
  );
  return rows[0];
}

/** A confirmation's row and its consequences, by name. */
export interface ProgrammingRecord {
  calibrationId: string;
  unitId: string;
  stationId: string;
  expectedCounts: number;
  writtenCounts: number;
  readBackCounts: number;
  checksum: string | null;
  matches: boolean;
  confirmedAt: Date;
  /** The audit entry's reason when it does not match. */
  reason: string;
  eventsChannel: string;
  /** The `programming.confirmed` event as JSON text. */
  eventJson: string;
}

/**
 * The confirmation, the unit's flag (a mismatch always flags; a match clears the flag only when it
 * confirms the unit's current calibration), the audit entry of a mismatch and the event.
 */
const recordStatement = namedStatement<ProgrammingRecord>(
  `with p as (
       insert into programming_confirmations (calibration_id, unit_id, station_id, expected_counts,
                                              written_counts, read_back_counts, checksum, matches, confirmed_at)
       values ($calibrationId, $unitId, $stationId, $expectedCounts, $writtenCounts, $readBackCounts,
               $checksum, $matches, $confirmedAt) returning id
     ), u as (
       update units set programming_mismatch = not $matches, updated_at = $confirmedAt
        where id = $unitId and (current_calibration_id = $calibrationId or not $matches) returning id
     ), a as (
       insert into audit_log (action, subject_type, subject_id, reason)
       select 'units.programming_mismatch', 'unit', $unitId::text, $reason where not $matches returning id
     )
     select pg_notify($eventsChannel, $eventJson) from p`,
);

export async function recordProgramming(
  client: pg.PoolClient | pg.Pool,
  values: ProgrammingRecord,
): Promise<void> {
  await client.query(recordStatement(values));
}
