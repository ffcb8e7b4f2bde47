import { createHash } from 'node:crypto';
import type { StationPrincipal } from '#server/lib/auth';
import { withTransaction } from '#server/db/transaction';
import { prepared } from '#server/db/prepared';
import { JOBS_WAKE_CHANNEL, queues } from '#jobs/queues';
import { measurementSchema, type Measurement } from '#shared/schemas/measurement';
import type { MeasurementAccepted } from '#shared/schemas/measurements';
import type { LineEvent } from '#shared/schemas/events';
import { CalibrationInputError, validateCalibrationInput } from '#shared/calibration';
import { captureSignals, captureToMeasurement } from '#shared/capture/capture';
import { parseNumericCsv } from '#shared/capture/csv';
import { EVENTS_CHANNEL } from '#server/modules/events/event-hub';
import { findModelRow, findRecipeRow, releasedRecipe } from '#server/modules/recipes/recipes.repository';
import { findStation } from '#server/modules/stations/stations.service';
import { findUnitBySerial } from '#server/modules/units/units.service';
import { registerSeenUnit } from '#server/modules/units/units.repository';
import { latestCalibrationOfMeasurement } from '#server/modules/calibrations/calibrations.repository';
import type { ProductionFacts } from '#server/modules/qualification/qualification.service';
import { measurementErrors } from '../measurements.errors';
import { measurementIdentity, type MeasurementIdentity } from '../measurements.repository';
import type { MeasurementsContext } from '../measurements.context';
import {
  insertMeasurement,
  intakeContext,
  storeMeasurementInOneTrip,
  type IntakeContext,
} from './intake.repository';

export function resultUrlFor(measurementId: string): string {
  return `/api/station/measurements/${encodeURIComponent(measurementId)}/result`;
}

function sha256(text: string): string {
  return createHash('sha256').update(text).digest('hex');
}

function repeatedAnswerFrom(
  c: IntakeContext,
  digest: string,
  station: StationPrincipal,
): MeasurementAccepted {
  if (c.ex_sha256 !== digest || c.ex_station_id !== station.stationId)
    throw measurementErrors.idConflict(c.ex_measurement_id!);
  return {
    measurementId: c.ex_measurement_id!,
    serial: c.ex_serial!,
    status: c.ex_computed ? 'computed' : 'queued',
    resultUrl: resultUrlFor(c.ex_measurement_id!),
    repeated: true,
  };
}

/** The answer to a repeated post: same id and same body → the same answer; different body → 409. */
async function repeatedAnswer(
  ctx: MeasurementsContext,
  existing: MeasurementIdentity,
  digest: string,
  station: StationPrincipal,
): Promise<MeasurementAccepted> {
  if (existing.payloadSha256 !== digest || existing.stationId !== station.stationId) {
    throw measurementErrors.idConflict(existing.measurementId);
  }
  const done = await latestCalibrationOfMeasurement(ctx.db, existing.id);
  return {
    measurementId: existing.measurementId,
    serial: existing.serial,
    status: done ? 'computed' : 'queued',
    resultUrl: resultUrlFor(existing.measurementId),
    repeated: true,
  };
}

/**
 * The gate a new measurement meets before the intake's own rules (the station's qualification). A repeat
 * of a stored measurement skips it: the station lost the first answer, not the right to it.
 */
export interface IntakeGate {
  /** Refuses the post, from the facts the intake's first statement gathered. */
  judge(facts: ProductionFacts, serial: string): Promise<void>;
  /** Runs before a body that does not parse is refused, so a locked station says so first. */
  beforeRefusingBody(): Promise<void>;
}

/**
 * Accepts a station's measurement: validates it (shape, then usability against the unit's active
 * recipe), and stores it and enqueues its computation in one transaction, so neither can exist
 * without the other. Idempotent on `measurementId`, also under concurrent posts. With `gate`, a new
 * measurement meets it first (without, the caller has gated the post already).
 */
export async function acceptMeasurement(
  ctx: MeasurementsContext,
  station: StationPrincipal,
  body: unknown,
  opts: { source?: 'timings' | 'capture'; raw?: string; gate?: IntakeGate } = {},
): Promise<MeasurementAccepted> {
  const parsed = measurementSchema.safeParse(body);
  if (!parsed.success) {
    await opts.gate?.beforeRefusingBody();
    throw parsed.error;
  }
  const measurement: Measurement = parsed.data;
  // zod's output has the schema's key order whatever the station's JSON library did, so its text is a
  // canonical form of the body (unknown keys, which the contract ignores, drop out).
  const canonical = JSON.stringify(measurement);
  const digest = sha256(canonical);

  // One round trip gathers everything the rules need.
  // The schema normalised the serial (trimmed, ASCII, upper-case): it is the unit's key as it is.
  const serialKey = measurement.serial;
  const c = await intakeContext(ctx.pool, {
    stationId: station.stationId,
    serialKey,
    measurementId: measurement.measurementId,
  });
  if (c.ex_id) return repeatedAnswerFrom(c, digest, station);
  await opts.gate?.judge(c, serialKey);
  if (!c.model_id) throw measurementErrors.unknownSerial(measurement.serial);
  if (!c.allowed_model_ids.includes(c.model_id)) {
    throw measurementErrors.modelNotAllowed(measurement.serial, c.model_code!, c.station_name);
  }
  if (c.unit_status === 'on_hold') throw measurementErrors.onHold(c.unit_serial!, c.hold_reason);
  if (c.unit_status === 'scrapped') throw measurementErrors.scrapped(c.unit_serial!);
  if (!c.active_recipe_id) throw measurementErrors.noActiveRecipe(c.model_code!);
  const recipe = await releasedRecipe(ctx.db, c.active_recipe_id);
  const usable = validateCalibrationInput(measurement, recipe.body);
  if (!usable.ok) throw measurementErrors.unusable(usable.issues);

  const row = {
    measurementId: measurement.measurementId,
    stationId: station.stationId,
    source: opts.source ?? 'timings',
    canonical,
    raw: opts.raw === undefined || opts.raw === canonical ? null : opts.raw,
    digest,
    operatorId: c.attended_by,
  } as const;
  // The usual case in one statement (see `storeMeasurementInOneTrip`); when a concurrent post won a
  // race, the transaction below sorts it out.
  const receivedAt = ctx.clock();
  const oneTrip = await storeMeasurementInOneTrip(ctx.pool, {
    ...row,
    receivedAt,
    unitId: c.unit_id,
    unitSerial: c.unit_serial,
    serialKey,
    modelId: c.model_id,
    computeQueue: queues.calibrationCompute.name,
    recipeId: recipe.id,
    wakeChannel: JOBS_WAKE_CHANNEL,
    eventsChannel: EVENTS_CHANNEL,
    receivedAtText: receivedAt.toISOString(),
    sendsJobs: !ctx.queue.silent,
  });
  if (oneTrip) {
    return {
      measurementId: oneTrip.measurement_id,
      serial: oneTrip.serial,
      status: 'queued',
      resultUrl: resultUrlFor(oneTrip.measurement_id),
      repeated: false,
    };
  }

  const stored = await withTransaction(ctx.pool, async ({ client, tx, discard }) => {
    // First sight of this serial at a single-model station: register it now.
    const unit = c.unit_id
      ? { id: c.unit_id, serial: c.unit_serial! }
      : await registerSeenUnit(tx, serialKey, c.model_id!);
    const inserted = await insertMeasurement(client, {
      ...row,
      unitId: unit.id,
      serial: unit.serial,
      receivedAt: ctx.clock(),
    });
    if (!inserted) {
      // Another post with this id committed while we were checking: answer as for a repeat.
      discard();
      return undefined;
    }
    const event: LineEvent = {
      type: 'measurement.received',
      stationId: station.stationId,
      unitId: unit.id,
      serial: unit.serial,
      measurementId: inserted.measurementId,
      at: inserted.receivedAt.toISOString(),
    };
    await ctx.queue.send(
      'calibrationCompute',
      { measurementPk: inserted.id, recipeId: recipe.id },
      {
        db: { executeSql: (text, values) => client.query(prepared(text, values)) },
        notify: [{ channel: EVENTS_CHANNEL, payload: JSON.stringify(event) }],
      },
    );
    return { measurementId: inserted.measurementId, serial: unit.serial };
  });
  if (!stored) {
    const winner = await measurementIdentity(ctx.db, measurement.measurementId);
    return repeatedAnswer(ctx, winner!, digest, station);
  }
  return {
    measurementId: stored.measurementId,
    serial: stored.serial,
    status: 'queued',
    resultUrl: resultUrlFor(stored.measurementId),
    repeated: false,
  };
}

/**
 * Turns a sampled capture (CSV text) into a measurement with the unit's active recipe, so it can be
 * accepted like posted timings. The CSV itself is stored verbatim and the calibration recomputes from it.
 */
export async function measurementFromCapture(
  ctx: MeasurementsContext,
  station: StationPrincipal,
  fields: { measurementId: string; serial: string; direction?: 'forward' | 'reverse' },
  csvText: string | Uint8Array,
): Promise<Measurement> {
  const recipe = await recipeForSerial(ctx, station.stationId, fields.serial);
  try {
    return captureToMeasurement(captureSignals(parseNumericCsv(csvText)), recipe, fields);
  } catch (e) {
    if (e instanceof CalibrationInputError) throw measurementErrors.unusable(e.issues);
    throw e;
  }
}

/** The recipe a measurement of this serial at this station would be judged by (same rules as posting). */
async function recipeForSerial(ctx: MeasurementsContext, stationId: string, serial: string) {
  const stationRow = (await findStation(ctx.db, stationId))!;
  const unit = await findUnitBySerial(ctx.db, serial);
  if (!unit && stationRow.allowedModelIds.length !== 1) throw measurementErrors.unknownSerial(serial);
  const model = (await findModelRow(ctx.db, unit?.modelId ?? stationRow.allowedModelIds[0]))!;
  if (!stationRow.allowedModelIds.includes(model.id))
    throw measurementErrors.modelNotAllowed(serial, model.code, stationRow.name);
  if (!model.activeRecipeId) throw measurementErrors.noActiveRecipe(model.code);
  const recipe = (await findRecipeRow(ctx.db, model.activeRecipeId))!;
  return recipe.body;
}
