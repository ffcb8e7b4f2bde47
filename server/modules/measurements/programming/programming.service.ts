import type { StationPrincipal } from '#server/lib/auth';
import { withTransaction } from '#server/db/transaction';
import type { ProgrammingConfirmation } from '#shared/schemas/calibrations';
import type { LineEvent } from '#shared/schemas/events';
import { EVENTS_CHANNEL } from '#server/modules/events/event-hub';
import { mismatchHoldReason, placeAutomaticHold } from '#server/modules/quality/quality.service';
import { calibrationErrors } from '#server/modules/calibrations/calibrations.errors';
import { measurementErrors } from '../measurements.errors';
import type { MeasurementsContext } from '../measurements.context';
import { confirmIfMatching, recordProgramming, type ProgrammingRecord } from './programming.repository';

/** Records what the station wrote and read back; a mismatch flags the unit everywhere it is shown. */
export async function confirmProgramming(
  ctx: MeasurementsContext,
  station: StationPrincipal,
  measurementId: string,
  body: ProgrammingConfirmation,
) {
  const now = ctx.clock();
  // A match (the usual case) is recorded by the statement that reads the measurement: one round trip.
  const m = await confirmIfMatching(ctx.pool, {
    measurementId,
    stationId: station.stationId,
    writtenCounts: body.writtenCounts,
    readBackCounts: body.readBackCounts,
    checksum: body.checksum ?? null,
    confirmedAt: now,
    atText: now.toISOString(),
    eventsChannel: EVENTS_CHANNEL,
  });
  if (!m || m.station_id !== station.stationId) throw measurementErrors.notFound(measurementId);
  if (!m.cal_id) throw calibrationErrors.notComputed(measurementId);
  if (m.offset_counts === null) throw calibrationErrors.unusableResult(measurementId);
  const calibrationId = m.cal_id;
  const expected = m.offset_counts;
  if (m.recorded) return { matches: true, expectedCounts: expected, confirmedAt: now.toISOString() };
  // Not recorded, yet found and computed with counts: the values differ from the counts. The mismatch is
  // recorded and puts the unit on hold (quality's containment), in one transaction.
  const matches = false;
  const record: ProgrammingRecord = {
    calibrationId,
    unitId: m.unit_id!,
    stationId: station.stationId,
    expectedCounts: expected,
    writtenCounts: body.writtenCounts,
    readBackCounts: body.readBackCounts,
    checksum: body.checksum ?? null,
    matches,
    confirmedAt: now,
    reason: `expected ${expected}, written ${body.writtenCounts}, read back ${body.readBackCounts}`,
    eventsChannel: EVENTS_CHANNEL,
    eventJson: JSON.stringify({
      type: 'programming.confirmed',
      stationId: station.stationId,
      unitId: m.unit_id!,
      serial: m.serial,
      calibrationId,
      matches,
      at: now.toISOString(),
    } satisfies LineEvent),
  };
  await withTransaction(ctx.pool, async ({ client, tx }) => {
    await recordProgramming(client, record);
    await placeAutomaticHold(tx, {
      unitId: m.unit_id!,
      reason: mismatchHoldReason(expected, body.writtenCounts, body.readBackCounts),
      source: 'programming_mismatch',
      now,
      setUnit: true,
    });
  });
  return { matches, expectedCounts: expected, confirmedAt: now.toISOString() };
}
