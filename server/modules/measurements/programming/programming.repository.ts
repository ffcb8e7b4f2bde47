import type pg from 'pg';
import { namedStatement } from '#server/db/statement';

/**
 * The programming confirmation's statements: the measurement with its newest calibration, and the
 * confirmation written with the unit's flag, the audit entry and the event in one atomic statement.
 */

const measurementToConfirmStatement = namedStatement<{ measurementId: string }>(
  `select m.station_id, m.serial, c.id as cal_id, c.unit_id, c.offset_counts
       from measurements m
       left join lateral (select id, unit_id, offset_counts from calibrations
                           where measurement_pk = m.id order by computed_at desc limit 1) c on true
      where m.measurement_id = $measurementId`,
);

/** The measurement and its newest calibration in one query. */
export async function measurementToConfirm(pool: pg.Pool, measurementId: string) {
  const { rows } = await pool.query<{
    station_id: string;
    cal_id: string | null;
    unit_id: string | null;
    offset_counts: number | null;
    serial: string;
  }>(measurementToConfirmStatement({ measurementId }));
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
