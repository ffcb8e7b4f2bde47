import { createHash } from 'node:crypto';
import type pg from 'pg';
import { and, desc, eq, sql, type SQL } from 'drizzle-orm';
import { drizzle } from 'drizzle-orm/node-postgres';
import type { Db, DbOrTx } from '../../db/client';
import * as schema from '../../db/schema';
import { prepared } from '../../db/prepared';
import type { SessionUser, StationPrincipal } from '../../lib/auth';
import { jobInsertSql, type JobQueue } from '../../../jobs/queue-client';
import { JOBS_WAKE_CHANNEL, queues, travelerRenderPriority } from '../../../jobs/queues';
import { measurementSchema, type Measurement } from '../../../shared/schemas/measurement';
import type { CalibrationView, ProgrammingConfirmation } from '../../../shared/schemas/calibrations';
import type { MeasurementAccepted } from '../../../shared/schemas/measurements';
import {
  calibrate,
  CalibrationInputError,
  ENGINE_VERSION,
  validateCalibrationInput,
} from '../../../shared/calibration';
import type { CalibrationResult, Check } from '../../../shared/schemas/calibration-result';
import { failureStep } from '../../../shared/calibration/check-guide';
import { calibrateCapture, captureSignals, captureToMeasurement } from '../../../shared/capture/capture';
import { parseNumericCsv } from '../../../shared/capture/csv';
import { normaliseSerial } from '../../../shared/schemas/serial';
import { insertAudit } from '../audit/audit.repository';
import { models, recipes, type RecipeRecord } from '../recipes/recipes.table';
import { releasedRecipe } from '../recipes/recipes.repository';
import { EVENTS_CHANNEL } from '../events/event-hub';
import type { LineEvent } from '../../../shared/schemas/events';
import { stations } from '../stations/stations.table';
import { units, type UnitRecord } from '../units/units.table';
import { mismatchHoldReason, nextUnitState, placeAutomaticHold } from '../quality/quality.service';
import { measurementErrors } from './measurements.errors';
import { calibrations, measurements, type CalibrationRecord } from './measurements.table';

export interface LineContext {
  db: Db;
  pool: pg.Pool;
  queue: JobQueue;
  clock: () => Date;
}

export function resultUrlFor(measurementId: string): string {
  return `/api/station/measurements/${encodeURIComponent(measurementId)}/result`;
}

function sha256(text: string): string {
  return createHash('sha256').update(text).digest('hex');
}

/** A measurement's identity and hash (not its body). */
async function findMeasurement(db: DbOrTx, measurementId: string) {
  const [row] = await db
    .select({
      id: measurements.id,
      measurementId: measurements.measurementId,
      stationId: measurements.stationId,
      serial: measurements.serial,
      payloadSha256: measurements.payloadSha256,
    })
    .from(measurements)
    .where(eq(measurements.measurementId, measurementId));
  return row;
}

async function latestCalibrationFor(
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

interface IntakeContext {
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
  db: DbOrTx,
  existing: NonNullable<Awaited<ReturnType<typeof findMeasurement>>>,
  digest: string,
  station: StationPrincipal,
): Promise<MeasurementAccepted> {
  if (existing.payloadSha256 !== digest || existing.stationId !== station.stationId) {
    throw measurementErrors.idConflict(existing.measurementId);
  }
  const done = await latestCalibrationFor(db, existing.id);
  return {
    measurementId: existing.measurementId,
    serial: existing.serial,
    status: done ? 'computed' : 'queued',
    resultUrl: resultUrlFor(existing.measurementId),
    repeated: true,
  };
}

/**
 * Accepts a station's measurement: validates it (shape, then usability against the unit's active
 * recipe), and stores it and enqueues its computation in one transaction, so neither can exist
 * without the other. Idempotent on `measurementId`, also under concurrent posts.
 */
export async function acceptMeasurement(
  ctx: LineContext,
  station: StationPrincipal,
  body: unknown,
  opts: { source?: 'timings' | 'capture'; raw?: string } = {},
): Promise<MeasurementAccepted> {
  const measurement: Measurement = measurementSchema.parse(body);
  // zod's output has the schema's key order whatever the station's JSON library did, so its text is a
  // canonical form of the body (unknown keys, which the contract ignores, drop out).
  const canonical = JSON.stringify(measurement);
  const digest = sha256(canonical);

  // One round trip gathers everything the rules need: a repeat of this id, the station, the unit
  // (if known) and its model (or the station's only model).
  // The schema normalised the serial (trimmed, ASCII, upper-case): it is the unit's key as it is.
  const serialKey = measurement.serial;
  const { rows } = await ctx.pool.query<IntakeContext>(
    prepared(
      `select s.name as station_name, s.allowed_model_ids, s.attended_by,
            u.id as unit_id, u.serial as unit_serial, u.status as unit_status, u.hold_reason,
            mo.id as model_id, mo.code as model_code, mo.active_recipe_id,
            ex.id as ex_id, ex.measurement_id as ex_measurement_id, ex.station_id as ex_station_id,
            ex.serial as ex_serial, ex.payload_sha256 as ex_sha256,
            exists (select 1 from calibrations c where c.measurement_pk = ex.id) as ex_computed
       from stations s
       left join units u on upper(u.serial) = $2
       left join models mo on mo.id = coalesce(u.model_id,
            case when jsonb_array_length(s.allowed_model_ids) = 1 then (s.allowed_model_ids->>0)::uuid end)
       left join measurements ex on ex.measurement_id = $3
      where s.id = $1`,
      [station.stationId, serialKey, measurement.measurementId],
    ),
  );
  const c = rows[0];
  if (c.ex_id) return repeatedAnswerFrom(c, digest, station);
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

  // The usual case in one statement (one round trip, its own transaction): the unit registered if new,
  // the measurement stored, its computation queued, the worker woken and the event sent. No row comes
  // back only when a concurrent post won a race (the same serial first seen at two stations, or the same
  // measurement posted twice at once): the transaction below sorts those out.
  const receivedAt = ctx.clock();
  const { rows: oneTrip } = await ctx.pool.query<{
    id: string;
    measurement_id: string;
    unit_id: string;
    serial: string;
  }>(
    prepared(
      `with nu as (
         insert into units (serial, model_id) select $11, $12 where $3::uuid is null
         on conflict do nothing returning id, serial
       ), u as (
         select id, serial from nu
         union all select $3::uuid, $4 where $3::uuid is not null
       ), m as (
         insert into measurements (measurement_id, station_id, unit_id, serial, source, payload, payload_raw,
                                   payload_sha256, operator_id, received_at)
         select $1, $2, u.id, u.serial, $5, $6, $7, $8, $9, $10 from u
         on conflict do nothing returning id, measurement_id, unit_id, serial
       ), j as (
         ${jobInsertSql({
           queueParam: '$13',
           dataSql: `jsonb_build_object('measurementPk', m.id, 'recipeId', $14::text)`,
           fromSql: '(select id from m where $18) m',
         })}
       )
       select m.id, m.measurement_id, m.unit_id, m.serial,
              case when $18 then pg_notify($15, $13) end,
              pg_notify($16, json_build_object('type', 'measurement.received', 'stationId', $2::text,
                'unitId', m.unit_id, 'serial', m.serial, 'measurementId', m.measurement_id, 'at', $17::text)::text),
              -- A measurement is never stored without its job: no queue, no commit (the cast fails; it
              -- names a column of m so the planner cannot fold it into a constant and fail every time).
              case when exists (select 1 from j) or not $18 then 0
                   else ('no job queue ' || $13 || ' for measurement ' || m.id::text || ': run the migrations')::int
              end as queued
         from m`,
      [
        measurement.measurementId,
        station.stationId,
        c.unit_id,
        c.unit_serial,
        opts.source ?? 'timings',
        canonical,
        opts.raw ?? canonical,
        digest,
        c.attended_by,
        receivedAt,
        serialKey,
        c.model_id,
        queues.calibrationCompute.name,
        recipe.id,
        JOBS_WAKE_CHANNEL,
        EVENTS_CHANNEL,
        receivedAt.toISOString(),
        // false for a queue that sends nothing (the demo seed computes in-process)
        !ctx.queue.silent,
      ],
    ),
  );
  if (oneTrip[0]) {
    return {
      measurementId: oneTrip[0].measurement_id,
      serial: oneTrip[0].serial,
      status: 'queued',
      resultUrl: resultUrlFor(oneTrip[0].measurement_id),
      repeated: false,
    };
  }

  const client = await ctx.pool.connect();
  try {
    await client.query('BEGIN');
    const tx = drizzle(client, { schema, casing: 'snake_case' });
    let unit = c.unit_id ? { id: c.unit_id, serial: c.unit_serial! } : undefined;
    if (!unit) {
      // First sight of this serial at a single-model station: register it now.
      [unit] = await tx
        .insert(units)
        .values({ serial: serialKey, modelId: c.model_id })
        .onConflictDoNothing()
        .returning({ id: units.id, serial: units.serial });
      unit ??= (
        await tx
          .select({ id: units.id, serial: units.serial })
          .from(units)
          .where(sql`upper(${units.serial}) = ${serialKey}`)
      )[0];
      if (!unit) throw new Error(`unit ${serialKey} neither inserted nor found`);
    }
    const { rows: insertedRows } = await client.query<{
      id: string;
      measurement_id: string;
      received_at: Date;
    }>(
      prepared(
        `insert into measurements (measurement_id, station_id, unit_id, serial, source, payload, payload_raw,
                                   payload_sha256, operator_id, received_at)
         values ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10)
         on conflict do nothing returning id, measurement_id, received_at`,
        [
          measurement.measurementId,
          station.stationId,
          unit.id,
          unit.serial,
          opts.source ?? 'timings',
          canonical,
          opts.raw ?? canonical,
          digest,
          c.attended_by,
          ctx.clock(),
        ],
      ),
    );
    const inserted = insertedRows[0]
      ? {
          id: insertedRows[0].id,
          measurementId: insertedRows[0].measurement_id,
          receivedAt: insertedRows[0].received_at,
        }
      : undefined;
    if (!inserted) {
      // Another post with this id committed while we were checking: answer as for a repeat.
      await client.query('ROLLBACK');
      const winner = await findMeasurement(ctx.db, measurement.measurementId);
      return repeatedAnswer(ctx.db, winner!, digest, station);
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
    await client.query('COMMIT');
    return {
      measurementId: inserted.measurementId,
      serial: unit.serial,
      status: 'queued',
      resultUrl: resultUrlFor(inserted.measurementId),
      repeated: false,
    };
  } catch (e) {
    await client.query('ROLLBACK').catch(() => {});
    throw e;
  } finally {
    client.release();
  }
}

/**
 * Turns a sampled capture (CSV text) into a measurement with the unit's active recipe, so it can be
 * accepted like posted timings. The CSV itself is stored verbatim and the calibration recomputes from it.
 */
export async function measurementFromCapture(
  ctx: LineContext,
  station: StationPrincipal,
  fields: { measurementId: string; serial: string; direction?: 'forward' | 'reverse' },
  csvText: string | Uint8Array,
): Promise<Measurement> {
  const recipe = await recipeForSerial(ctx.db, station.stationId, fields.serial);
  try {
    return captureToMeasurement(captureSignals(parseNumericCsv(csvText)), recipe, fields);
  } catch (e) {
    if (e instanceof CalibrationInputError) throw measurementErrors.unusable(e.issues);
    throw e;
  }
}

/** The recipe a measurement of this serial at this station would be judged by (same rules as posting). */
async function recipeForSerial(db: Db, stationId: string, serial: string) {
  const [stationRow] = await db.select().from(stations).where(eq(stations.id, stationId));
  const [unit] = await db
    .select()
    .from(units)
    .where(sql`upper(${units.serial}) = ${normaliseSerial(serial)}`);
  if (!unit && stationRow.allowedModelIds.length !== 1) throw measurementErrors.unknownSerial(serial);
  const [model] = await db
    .select()
    .from(models)
    .where(eq(models.id, unit?.modelId ?? stationRow.allowedModelIds[0]));
  if (!stationRow.allowedModelIds.includes(model.id))
    throw measurementErrors.modelNotAllowed(serial, model.code, stationRow.name);
  if (!model.activeRecipeId) throw measurementErrors.noActiveRecipe(model.code);
  const [recipe] = await db.select().from(recipes).where(eq(recipes.id, model.activeRecipeId));
  return recipe.body;
}

/**
 * Operator wording for what to do next with the unit after this calibration. The failed checks pick
 * the step from the one table in shared/calibration/check-guide.ts: a retest only where a retest can
 * help, repair at once where it cannot. A fail that used the recipe's last attempt is the retest
 * policy's hold; `unitHoldReason` is any hold the unit is under now.
 */
export function nextActionFor(
  verdict: 'pass' | 'fail' | 'unusable',
  attempt: number | null,
  maxAttempts: number,
  unitHoldReason: string | null,
  checks: readonly Check[] = [],
): string {
  if (verdict === 'unusable')
    return 'The station data could not be used (not a unit failure): run the measurement again.';
  if (verdict === 'pass') {
    if (unitHoldReason)
      return `The unit is on hold (${unitHoldReason}): do not program or ship it. Tag it and put it in the hold area for quality.`;
    return 'Program the offset, let the station confirm it, print the traveler and send the unit on.';
  }
  const step = failureStep(checks);
  if (step?.remedy === 'repair') return `${step.action} The unit is on hold until quality releases it.`;
  if ((attempt ?? 0) >= maxAttempts) {
    return `No attempts left (${attempt} of ${maxAttempts}): the unit is on hold. Tag it and put it in the hold area for quality.`;
  }
  if (unitHoldReason)
    return `The unit is on hold (${unitHoldReason}): tag it and put it in the hold area for quality.`;
  const retest = `attempt ${(attempt ?? 0) + 1} of ${maxAttempts}`;
  if (step?.remedy === 'station') return `${step.action} (${retest})`;
  return `Retest (${retest}): ${step?.action ?? 'reseat the unit and check the coupling, then spin it again.'}`;
}

/**
 * Computes one measurement with one recipe version and commits the calibration, the unit's new
 * status, the follow-on traveler job and the event in one transaction. Safe to run twice: a second
 * run finds the calibration (unique per measurement and recipe version) and does nothing.
 * Round trips are kept few on purpose (each costs more than the computation itself).
 */
export async function computeCalibration(
  ctx: LineContext,
  job: { measurementPk: string; recipeId: string; recompute?: { requestedBy: string; reason: string } },
): Promise<{ calibrationId: string; created: boolean }> {
  if (job.recompute) return recomputeCalibration(ctx, job as Required<typeof job>);
  // The measurement, whether this job already ran, and the "computing" event, in one statement.
  const { rows } = await ctx.pool.query<{
    id: string;
    measurement_id: string;
    station_id: string;
    unit_id: string;
    serial: string;
    source: 'timings' | 'capture';
    payload: Measurement;
    payload_raw: string | null;
    done_id: string | null;
  }>(
    prepared(
      `with d as (select id from calibrations where measurement_pk = $1 and recipe_id = $2 and engine_version = $5)
     select m.id, m.measurement_id, m.station_id, m.unit_id, m.serial, m.source, m.payload,
            case when m.source = 'capture' then m.payload_raw end as payload_raw,
            (select id from d) as done_id,
            case when not exists (select 1 from d) then pg_notify($3, json_build_object(
              'type', 'calibration.computing', 'stationId', m.station_id, 'unitId', m.unit_id,
              'serial', m.serial, 'measurementId', m.measurement_id, 'at', $4::text)::text) end as notified
       from measurements m where m.id = $1`,
      [job.measurementPk, job.recipeId, EVENTS_CHANNEL, ctx.clock().toISOString(), ENGINE_VERSION],
    ),
  );
  const measurement = rows[0];
  if (!measurement) throw new Error(`measurement ${job.measurementPk} does not exist`);
  if (measurement.done_id) return { calibrationId: measurement.done_id, created: false };
  const recipe = await releasedRecipe(ctx.db, job.recipeId);

  const { result, stored, computeMs } = runEngine(
    {
      source: measurement.source,
      payload: measurement.payload,
      payloadRaw: measurement.payload_raw,
      measurementId: measurement.measurement_id,
      serial: measurement.serial,
    },
    recipe,
  );
  const verdict = result?.verdict ?? 'unusable';
  const now = ctx.clock();

  const client = await ctx.pool.connect();
  try {
    await client.query('BEGIN');
    const { rows: unitRows } = await client.query<{
      attempts: number;
      status: UnitRecord['status'];
      serial: string;
    }>(
      prepared('select attempts, status, serial from units where id = $1 for update', [measurement.unit_id]),
    );
    const unit = unitRows[0];
    const counts = verdict !== 'unusable';
    const attempt = counts ? unit.attempts + 1 : null;
    const next = counts
      ? nextUnitState(verdict as 'pass' | 'fail', unit.attempts, recipe, result?.checks ?? [])
      : null;
    // Calibration, unit status and the commit event in one statement; nothing changes if this
    // (measurement, recipe) pair was computed meanwhile.
    const { rows: inserted } = await client.query<{ id: string }>(
      prepared(
        `with c as (
         insert into calibrations (measurement_pk, recipe_id, unit_id, station_id, engine_version, verdict,
                                   offset_deg, offset_counts, attempt, result, compute_ms, computed_at)
         values ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12)
         on conflict do nothing returning id
       ), u as (
         update units set
           attempts = $13, status = $14, hold_reason = $15, updated_at = $12,
           current_calibration_id = case when $16 then (select id from c) else current_calibration_id end,
           current_offset_deg = case when $16 then $7 else current_offset_deg end,
           current_offset_counts = case when $16 then $8 else current_offset_counts end,
           programming_mismatch = case when $16 then false else programming_mismatch end
         where id = $3 and $17 and exists (select 1 from c)
         returning id
       ), tj as (
         ${jobInsertSql({
           queueParam: '$23',
           dataSql: `jsonb_build_object('calibrationId', c.id)`,
           prioritySql: '$24::int',
           fromSql: '(select id from c where $17 and $27) c',
         })}
       ), cw as (
         ${jobInsertSql({
           queueParam: '$25',
           dataSql: `jsonb_build_object('stationId', $4::text, 'modelId', $26::text)`,
           fromSql: '(select id from c where $17 and $27) c',
         })}
       )
       select c.id,
              pg_notify($18, json_build_object('type', 'calibration.committed', 'stationId', $4::text,
                'unitId', $3::text, 'serial', $19::text, 'measurementId', $20::text, 'calibrationId', c.id,
                'verdict', $6::text, 'at', $21::text)::text),
              case when $17 and $27 then pg_notify($22, $23) end
         from c left join u on true`,
        [
          measurement.id,
          recipe.id,
          measurement.unit_id,
          measurement.station_id,
          ENGINE_VERSION,
          verdict,
          result?.offsetDeg ?? null,
          result?.offsetCounts ?? null,
          attempt,
          JSON.stringify(stored),
          computeMs,
          now,
          next?.attempts ?? 0,
          next?.status ?? 'new',
          next?.holdReason ?? null,
          verdict === 'pass',
          counts,
          EVENTS_CHANNEL,
          unit.serial,
          measurement.measurement_id,
          now.toISOString(),
          JOBS_WAKE_CHANNEL,
          queues.travelerRender.name,
          travelerRenderPriority(now),
          queues.chartWatch.name,
          recipe.modelId,
          !ctx.queue.silent,
        ],
      ),
    );
    if (!inserted[0]) {
      await client.query('ROLLBACK');
      const [winner] = await ctx.db
        .select({ id: calibrations.id })
        .from(calibrations)
        .where(
          and(
            eq(calibrations.measurementPk, measurement.id),
            eq(calibrations.recipeId, recipe.id),
            eq(calibrations.engineVersion, ENGINE_VERSION),
          ),
        );
      return { calibrationId: winner.id, created: false };
    }
    const calibrationId = inserted[0].id;
    const tx = drizzle(client, { schema, casing: 'snake_case' });
    if (next?.status === 'on_hold') {
      await placeAutomaticHold(tx, {
        unitId: measurement.unit_id,
        reason: next.holdReason!,
        source: 'retest_policy',
        now,
        setUnit: false,
        before: { status: unit.status, attempts: unit.attempts },
      });
    }
    // The traveler render (newest first) and the watched charts' update were queued by the statement
    // above, with the calibration (picked up at the chart worker's next poll, within 2 s: alerts need
    // no millisecond wake-up).
    await client.query('COMMIT');
    return { calibrationId, created: true };
  } catch (e) {
    await client.query('ROLLBACK').catch(() => {});
    throw e;
  } finally {
    client.release();
  }
}

/**
 * Runs the engine on a stored measurement: a capture is recomputed from its CSV, posted timings from
 * their JSON. Unusable input is a stored outcome ('unusable'), not a failure of the job.
 */
export function runEngine(
  m: {
    source: 'timings' | 'capture';
    payload: Measurement;
    payloadRaw: string | null;
    measurementId: string;
    serial: string;
  },
  recipe: RecipeRecord,
): { result: CalibrationResult | null; stored: CalibrationRecord['result']; computeMs: number } {
  const t0 = performance.now();
  try {
    const result =
      m.source === 'capture'
        ? calibrateCapture(m.payloadRaw!, recipe.body, {
            measurementId: m.measurementId,
            serial: m.serial,
            direction: m.payload.segments[0]?.direction,
          }).result
        : calibrate(m.payload, recipe.body);
    return { result, stored: result, computeMs: performance.now() - t0 };
  } catch (e) {
    if (!(e instanceof CalibrationInputError)) throw e;
    return {
      result: null,
      stored: { error: { code: e.code, message: e.message, issues: e.issues } },
      computeMs: performance.now() - t0,
    };
  }
}

/** Asks for a recomputation of a stored measurement with a released recipe version of its model. */
export async function requestRecompute(
  ctx: LineContext,
  actor: SessionUser,
  measurementId: string,
  input: { recipeId?: string; reason: string },
) {
  const [row] = await ctx.db
    .select({
      m: { id: measurements.id, serial: measurements.serial },
      modelId: units.modelId,
      activeRecipeId: models.activeRecipeId,
    })
    .from(measurements)
    .innerJoin(units, eq(units.id, measurements.unitId))
    .innerJoin(models, eq(models.id, units.modelId))
    .where(eq(measurements.measurementId, measurementId));
  if (!row) throw measurementErrors.notFoundAnywhere(measurementId);
  const recipeId = input.recipeId ?? row.activeRecipeId;
  if (!recipeId) throw measurementErrors.recipeNotUsable('the model has no released recipe');
  const [recipe] = await ctx.db.select().from(recipes).where(eq(recipes.id, recipeId));
  if (!recipe || recipe.modelId !== row.modelId)
    throw measurementErrors.recipeNotUsable("it is not a recipe of this unit's model");
  if (recipe.status === 'draft') throw measurementErrors.recipeNotUsable('it is a draft; release it first');
  const [done] = await ctx.db
    .select({ id: calibrations.id })
    .from(calibrations)
    .where(
      and(
        eq(calibrations.measurementPk, row.m.id),
        eq(calibrations.recipeId, recipe.id),
        eq(calibrations.engineVersion, ENGINE_VERSION),
      ),
    );
  if (!done) {
    await ctx.queue.send('calibrationCompute', {
      measurementPk: row.m.id,
      recipeId: recipe.id,
      recompute: { requestedBy: actor.id, reason: input.reason },
    });
  }
  return {
    measurementId,
    serial: row.m.serial,
    recipe: { id: recipe.id, version: recipe.version },
    engineVersion: ENGINE_VERSION,
    status: done ? ('computed' as const) : ('queued' as const),
    calibrationId: done?.id ?? null,
  };
}

/**
 * An engineer's recomputation: the stored measurement with a chosen released recipe version and this
 * engine. It adds a calibration row (purpose 'recompute') and an audit entry, and changes nothing
 * else: the unit's status, attempts and programmed offset stay what the station's calibration made
 * them. Once per (measurement, recipe version, engine version).
 */
async function recomputeCalibration(
  ctx: LineContext,
  job: { measurementPk: string; recipeId: string; recompute: { requestedBy: string; reason: string } },
): Promise<{ calibrationId: string; created: boolean }> {
  const [m] = await ctx.db.select().from(measurements).where(eq(measurements.id, job.measurementPk));
  if (!m) throw new Error(`measurement ${job.measurementPk} does not exist`);
  const recipe = await releasedRecipe(ctx.db, job.recipeId);
  const sameKey = and(
    eq(calibrations.measurementPk, m.id),
    eq(calibrations.recipeId, recipe.id),
    eq(calibrations.engineVersion, ENGINE_VERSION),
  );
  const [done] = await ctx.db.select({ id: calibrations.id }).from(calibrations).where(sameKey);
  if (done) return { calibrationId: done.id, created: false };
  const { result, stored, computeMs } = runEngine({ ...m, payload: m.payload as Measurement }, recipe);
  return ctx.db.transaction(async (tx) => {
    const [row] = await tx
      .insert(calibrations)
      .values({
        measurementPk: m.id,
        recipeId: recipe.id,
        unitId: m.unitId,
        stationId: m.stationId,
        engineVersion: ENGINE_VERSION,
        verdict: result?.verdict ?? 'unusable',
        purpose: 'recompute',
        requestedBy: job.recompute.requestedBy,
        reason: job.recompute.reason,
        offsetDeg: result?.offsetDeg ?? null,
        offsetCounts: result?.offsetCounts ?? null,
        attempt: null,
        result: stored,
        computeMs,
        computedAt: ctx.clock(),
      })
      .onConflictDoNothing()
      .returning({ id: calibrations.id });
    if (!row) {
      const [winner] = await tx.select({ id: calibrations.id }).from(calibrations).where(sameKey);
      return { calibrationId: winner.id, created: false };
    }
    await insertAudit(tx, {
      actorId: job.recompute.requestedBy,
      action: 'calibrations.recomputed',
      subjectType: 'measurement',
      subjectId: m.measurementId,
      reason: job.recompute.reason,
      after: {
        calibrationId: row.id,
        recipeVersion: recipe.version,
        engineVersion: ENGINE_VERSION,
        verdict: result?.verdict ?? 'unusable',
        offsetDeg: result?.offsetDeg ?? null,
      },
    });
    return { calibrationId: row.id, created: true };
  });
}

/** Records what the station wrote and read back; a mismatch flags the unit everywhere it is shown. */
export async function confirmProgramming(
  ctx: LineContext,
  station: StationPrincipal,
  measurementId: string,
  body: ProgrammingConfirmation,
) {
  // The measurement and its newest calibration in one query.
  const { rows } = await ctx.pool.query<{
    station_id: string;
    cal_id: string | null;
    unit_id: string | null;
    offset_counts: number | null;
    serial: string;
  }>(
    prepared(
      `select m.station_id, m.serial, c.id as cal_id, c.unit_id, c.offset_counts
       from measurements m
       left join lateral (select id, unit_id, offset_counts from calibrations
                           where measurement_pk = m.id order by computed_at desc limit 1) c on true
      where m.measurement_id = $1`,
      [measurementId],
    ),
  );
  const m = rows[0];
  if (!m || m.station_id !== station.stationId) throw measurementErrors.notFound(measurementId);
  if (!m.cal_id) throw measurementErrors.notCalibrated(measurementId);
  if (m.offset_counts === null) throw measurementErrors.unusableResult(measurementId);
  const expected = m.offset_counts;
  const matches = body.writtenCounts === expected && body.readBackCounts === expected;
  const now = ctx.clock();
  // One atomic statement: the confirmation, the unit's flag (a mismatch always flags; a match clears
  // the flag only when it confirms the unit's current calibration), the audit entry and the event.
  const reason = `expected ${expected}, written ${body.writtenCounts}, read back ${body.readBackCounts}`;
  // A mismatch also puts the unit on hold (quality's containment), in the same transaction.
  const client = await ctx.pool.connect();
  try {
    await client.query('BEGIN');
    await client.query(
      prepared(
        `with p as (
       insert into programming_confirmations (calibration_id, unit_id, station_id, expected_counts,
                                              written_counts, read_back_counts, checksum, matches, confirmed_at)
       values ($1, $2, $3, $4, $5, $6, $7, $8, $9) returning id
     ), u as (
       update units set programming_mismatch = not $8, updated_at = $9
        where id = $2 and (current_calibration_id = $1 or not $8) returning id
     ), a as (
       insert into audit_log (action, subject_type, subject_id, reason)
       select 'units.programming_mismatch', 'unit', $2::text, $10 where not $8 returning id
     )
     select pg_notify($11, $12) from p`,
        [
          m.cal_id,
          m.unit_id,
          station.stationId,
          expected,
          body.writtenCounts,
          body.readBackCounts,
          body.checksum ?? null,
          matches,
          now,
          reason,
          EVENTS_CHANNEL,
          JSON.stringify({
            type: 'programming.confirmed',
            stationId: station.stationId,
            unitId: m.unit_id!,
            serial: m.serial,
            calibrationId: m.cal_id,
            matches,
            at: now.toISOString(),
          } satisfies LineEvent),
        ],
      ),
    );
    if (!matches) {
      await placeAutomaticHold(drizzle(client, { schema, casing: 'snake_case' }), {
        unitId: m.unit_id!,
        reason: mismatchHoldReason(expected, body.writtenCounts, body.readBackCounts),
        source: 'programming_mismatch',
        now,
        setUnit: true,
      });
    }
    await client.query('COMMIT');
  } catch (e) {
    await client.query('ROLLBACK').catch(() => {});
    throw e;
  } finally {
    client.release();
  }
  return { matches, expectedCounts: expected, confirmedAt: now.toISOString() };
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
export async function calibrationViews(
  db: DbOrTx,
  where: SQL | undefined,
  limit = 50,
): Promise<CalibrationView[]> {
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
    .where(where)
    .orderBy(desc(calibrations.computedAt))
    .limit(limit);
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

/**
 * The newest calibration of a station's measurement (null while it is computing). One query when it
 * exists; a second only to tell "not computed yet" from "no such measurement here".
 */
export async function measurementResult(db: DbOrTx, station: StationPrincipal | null, measurementId: string) {
  const [view] = await calibrationViews(
    db,
    and(eq(measurements.measurementId, measurementId), eq(calibrations.purpose, 'station')),
    1,
  );
  if (view && (!station || view.stationId === station.stationId)) return { view };
  if (!view) {
    const m = await findMeasurement(db, measurementId);
    if (m && (!station || m.stationId === station.stationId)) return { view: null };
  }
  throw measurementErrors.notFound(measurementId);
}

/**
 * First-pass yield per model since `since`: of the units whose first station measurement (attempt 1)
 * was computed since then, how many passed it. Model id → counts.
 */
export async function firstPassYieldByModel(
  db: DbOrTx,
  since: Date,
): Promise<Map<string, { firstMeasured: number; passedFirst: number }>> {
  const rows = await db
    .select({
      modelId: units.modelId,
      firstMeasured: sql<number>`count(*)::int`,
      passedFirst: sql<number>`count(*) filter (where ${calibrations.verdict} = 'pass')::int`,
    })
    .from(calibrations)
    .innerJoin(units, eq(units.id, calibrations.unitId))
    .where(
      and(
        eq(calibrations.purpose, 'station'),
        eq(calibrations.attempt, 1),
        sql`${calibrations.computedAt} >= ${since.toISOString()}`,
      ),
    )
    .groupBy(units.modelId);
  return new Map(
    rows.map((r) => [r.modelId, { firstMeasured: r.firstMeasured, passedFirst: r.passedFirst }]),
  );
}
