import { createHash } from 'node:crypto';
import type pg from 'pg';
import { and, desc, eq, sql } from 'drizzle-orm';
import { drizzle } from 'drizzle-orm/node-postgres';
import type { Db, DbOrTx } from '../../db/client';
import * as schema from '../../db/schema';
import type { StationPrincipal } from '../../lib/auth';
import type { JobQueue } from '../../../jobs/queue-client';
import { measurementSchema, type Measurement } from '../../../shared/schemas/measurement';
import type {
  CalibrationView,
  MeasurementAccepted,
  ProgrammingConfirmation,
} from '../../../shared/schemas/line';
import {
  calibrate,
  CalibrationInputError,
  ENGINE_VERSION,
  validateCalibrationInput,
} from '../../../shared/calibration';
import type { CalibrationResult } from '../../../shared/schemas/calibration-result';
import { calibrateCapture, captureSignals, captureToMeasurement } from '../../../shared/capture/capture';
import { parseNumericCsv } from '../../../shared/capture/csv';
import { insertAudit } from '../audit/audit.repository';
import { models, recipes, type RecipeRecord } from '../catalog/catalog.table';
import { notifyLineEvent } from '../events/event-hub';
import { stations } from '../stations/stations.table';
import { units, type UnitRecord } from '../units/units.table';
import { measurementErrors } from './measurements.errors';
import {
  calibrations,
  measurements,
  programmingConfirmations,
  type CalibrationRecord,
  type MeasurementRecord,
} from './measurements.table';

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

async function findMeasurement(db: DbOrTx, measurementId: string): Promise<MeasurementRecord | undefined> {
  const [row] = await db.select().from(measurements).where(eq(measurements.measurementId, measurementId));
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

/** The answer to a repeated post: same id and same body → the same answer; different body → 409. */
async function repeatedAnswer(
  db: DbOrTx,
  existing: MeasurementRecord,
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

  const existing = await findMeasurement(ctx.db, measurement.measurementId);
  if (existing) return repeatedAnswer(ctx.db, existing, digest, station);

  const [stationRow] = await ctx.db.select().from(stations).where(eq(stations.id, station.stationId));
  let [unit] = await ctx.db
    .select()
    .from(units)
    .where(sql`upper(${units.serial}) = ${measurement.serial.trim().toUpperCase()}`);
  let modelId = unit?.modelId;
  if (!unit) {
    if (stationRow.allowedModelIds.length !== 1) throw measurementErrors.unknownSerial(measurement.serial);
    modelId = stationRow.allowedModelIds[0];
  }
  const [model] = await ctx.db.select().from(models).where(eq(models.id, modelId!));
  if (!stationRow.allowedModelIds.includes(model.id)) {
    throw measurementErrors.modelNotAllowed(measurement.serial, model.code, stationRow.name);
  }
  if (unit?.status === 'on_hold') throw measurementErrors.onHold(unit.serial, unit.holdReason);
  if (!model.activeRecipeId) throw measurementErrors.noActiveRecipe(model.code);
  const [recipe] = await ctx.db.select().from(recipes).where(eq(recipes.id, model.activeRecipeId));
  const usable = validateCalibrationInput(measurement, recipe.body);
  if (!usable.ok) throw measurementErrors.unusable(usable.issues);

  const client = await ctx.pool.connect();
  try {
    await client.query('BEGIN');
    const tx = drizzle(client, { schema, casing: 'snake_case' });
    if (!unit) {
      // First sight of this serial at a single-model station: register it now.
      [unit] = await tx
        .insert(units)
        .values({ serial: measurement.serial.trim(), modelId: model.id })
        .onConflictDoNothing()
        .returning();
      unit ??= (
        await tx
          .select()
          .from(units)
          .where(sql`upper(${units.serial}) = ${measurement.serial.trim().toUpperCase()}`)
      )[0];
    }
    const [inserted] = await tx
      .insert(measurements)
      .values({
        measurementId: measurement.measurementId,
        stationId: station.stationId,
        unitId: unit.id,
        serial: unit.serial,
        source: opts.source ?? 'timings',
        payload: measurement,
        payloadRaw: opts.raw ?? canonical,
        payloadSha256: digest,
        operatorId: stationRow.attendedBy,
        receivedAt: ctx.clock(),
      })
      .onConflictDoNothing()
      .returning();
    if (!inserted) {
      // Another post with this id committed while we were checking: answer as for a repeat.
      await client.query('ROLLBACK');
      const winner = await findMeasurement(ctx.db, measurement.measurementId);
      return repeatedAnswer(ctx.db, winner!, digest, station);
    }
    await ctx.queue.send(
      'calibrationCompute',
      { measurementPk: inserted.id, recipeId: recipe.id },
      { db: { executeSql: (text, values) => client.query(text, values) } },
    );
    await notifyLineEvent(tx, {
      type: 'measurement.received',
      stationId: station.stationId,
      unitId: unit.id,
      serial: unit.serial,
      measurementId: inserted.measurementId,
      at: inserted.receivedAt.toISOString(),
    });
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
  csvText: string,
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
    .where(sql`upper(${units.serial}) = ${serial.trim().toUpperCase()}`);
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
 * Operator wording for what to do next with the unit after this calibration. A fail that used the
 * recipe's last attempt is the retest policy's hold; `unitHoldReason` is any hold the unit is under now.
 */
export function nextActionFor(
  verdict: 'pass' | 'fail' | 'unusable',
  attempt: number | null,
  maxAttempts: number,
  unitHoldReason: string | null,
): string {
  if (verdict === 'unusable')
    return 'The station data could not be used (not a unit failure): run the measurement again.';
  if (verdict === 'pass')
    return 'Program the offset, let the station confirm it, print the traveler and send the unit on.';
  if ((attempt ?? 0) >= maxAttempts) {
    return `No attempts left (${attempt} of ${maxAttempts}): the unit is on hold. Tag it and put it in the hold area for quality.`;
  }
  if (unitHoldReason)
    return `The unit is on hold (${unitHoldReason}): tag it and put it in the hold area for quality.`;
  return `Retest: reseat the unit and check the coupling, then spin it again (attempt ${(attempt ?? 0) + 1} of ${maxAttempts}).`;
}

/**
 * Computes one measurement with one recipe version and commits the calibration, the unit's new
 * status, the follow-on traveler job and the event in one transaction. Safe to run twice: a second
 * run finds the calibration (unique per measurement and recipe version) and does nothing.
 */
export async function computeCalibration(
  ctx: LineContext,
  job: { measurementPk: string; recipeId: string },
): Promise<{ calibrationId: string; created: boolean }> {
  const [measurement] = await ctx.db
    .select()
    .from(measurements)
    .where(eq(measurements.id, job.measurementPk));
  if (!measurement) throw new Error(`measurement ${job.measurementPk} does not exist`);
  const [done] = await ctx.db
    .select({ id: calibrations.id })
    .from(calibrations)
    .where(and(eq(calibrations.measurementPk, job.measurementPk), eq(calibrations.recipeId, job.recipeId)));
  if (done) return { calibrationId: done.id, created: false };
  const [recipe] = await ctx.db.select().from(recipes).where(eq(recipes.id, job.recipeId));
  if (!recipe) throw new Error(`recipe ${job.recipeId} does not exist`);

  await notifyLineEvent(ctx.db, {
    type: 'calibration.computing',
    stationId: measurement.stationId,
    unitId: measurement.unitId,
    serial: measurement.serial,
    measurementId: measurement.measurementId,
    at: ctx.clock().toISOString(),
  });

  const t0 = performance.now();
  let verdict: 'pass' | 'fail' | 'unusable';
  let stored: CalibrationRecord['result'];
  let result: CalibrationResult | null = null;
  try {
    result =
      measurement.source === 'capture'
        ? calibrateCapture(measurement.payloadRaw, recipe.body, {
            measurementId: measurement.measurementId,
            serial: measurement.serial,
            direction: (measurement.payload as Measurement).segments[0]?.direction,
          }).result
        : calibrate(measurement.payload as Measurement, recipe.body);
    verdict = result.verdict;
    stored = result;
  } catch (e) {
    if (!(e instanceof CalibrationInputError)) throw e;
    verdict = 'unusable';
    stored = { error: { code: e.code, message: e.message, issues: e.issues } };
  }
  const computeMs = performance.now() - t0;

  return ctx.db.transaction(async (tx) => {
    const [unit] = await tx.select().from(units).where(eq(units.id, measurement.unitId)).for('update');
    const counts = verdict !== 'unusable';
    const attempt = counts ? unit.attempts + 1 : null;
    const [row] = await tx
      .insert(calibrations)
      .values({
        measurementPk: measurement.id,
        recipeId: recipe.id,
        unitId: unit.id,
        stationId: measurement.stationId,
        engineVersion: ENGINE_VERSION,
        verdict,
        offsetDeg: result?.offsetDeg ?? null,
        offsetCounts: result?.offsetCounts ?? null,
        attempt,
        result: stored,
        computeMs,
        computedAt: ctx.clock(),
      })
      .onConflictDoNothing()
      .returning();
    if (!row) {
      const [winner] = await tx
        .select({ id: calibrations.id })
        .from(calibrations)
        .where(and(eq(calibrations.measurementPk, measurement.id), eq(calibrations.recipeId, recipe.id)));
      return { calibrationId: winner.id, created: false };
    }
    if (counts) await applyRetestPolicy(tx, unit, row, recipe, ctx.clock());
    await notifyLineEvent(tx, {
      type: 'calibration.committed',
      stationId: measurement.stationId,
      unitId: unit.id,
      serial: unit.serial,
      measurementId: measurement.measurementId,
      calibrationId: row.id,
      verdict,
      at: row.computedAt.toISOString(),
    });
    if (counts) {
      await ctx.queue.send('travelerRender', { calibrationId: row.id }, { db: txSql(tx) });
    }
    return { calibrationId: row.id, created: true };
  });
}

/** pg-boss's connection adapter over a Drizzle transaction, so a job is inserted inside it. */
function txSql(tx: DbOrTx) {
  return {
    executeSql: async (text: string, values: unknown[]) => {
      const session = (tx as unknown as { session: { client: pg.PoolClient } }).session;
      return session.client.query(text, values);
    },
  };
}

/**
 * A pass makes the unit calibrated with this offset. A fail leaves it failed for a retest while
 * attempts remain; at the recipe's maximum it goes on hold, with the reason, audited.
 */
async function applyRetestPolicy(
  tx: DbOrTx,
  unit: UnitRecord,
  cal: CalibrationRecord,
  recipe: RecipeRecord,
  now: Date,
) {
  const attempts = unit.attempts + 1;
  if (cal.verdict === 'pass') {
    await tx
      .update(units)
      .set({
        attempts,
        status: 'calibrated',
        holdReason: null,
        currentCalibrationId: cal.id,
        currentOffsetDeg: cal.offsetDeg,
        currentOffsetCounts: cal.offsetCounts,
        programmingMismatch: false,
        updatedAt: now,
      })
      .where(eq(units.id, unit.id));
    return;
  }
  const max = recipe.body.maxAttempts;
  if (attempts >= max) {
    const reason = `${attempts} calibration attempts without a pass (recipe v${recipe.version} allows ${max})`;
    await tx
      .update(units)
      .set({ attempts, status: 'on_hold', holdReason: reason, updatedAt: now })
      .where(eq(units.id, unit.id));
    await insertAudit(tx, {
      action: 'units.held_by_retest_policy',
      subjectType: 'unit',
      subjectId: unit.id,
      reason,
      before: { status: unit.status, attempts: unit.attempts },
      after: { status: 'on_hold', attempts },
    });
    return;
  }
  await tx.update(units).set({ attempts, status: 'failed', updatedAt: now }).where(eq(units.id, unit.id));
}

/** Records what the station wrote and read back; a mismatch flags the unit everywhere it is shown. */
export async function confirmProgramming(
  ctx: LineContext,
  station: StationPrincipal,
  measurementId: string,
  body: ProgrammingConfirmation,
) {
  const measurement = await findMeasurement(ctx.db, measurementId);
  if (!measurement || measurement.stationId !== station.stationId)
    throw measurementErrors.notFound(measurementId);
  const cal = await latestCalibrationFor(ctx.db, measurement.id);
  if (!cal) throw measurementErrors.notCalibrated(measurementId);
  if (cal.offsetCounts === null) throw measurementErrors.unusableResult(measurementId);
  const matches = body.writtenCounts === cal.offsetCounts && body.readBackCounts === cal.offsetCounts;
  return ctx.db.transaction(async (tx) => {
    const [row] = await tx
      .insert(programmingConfirmations)
      .values({
        calibrationId: cal.id,
        unitId: cal.unitId,
        stationId: station.stationId,
        expectedCounts: cal.offsetCounts!,
        writtenCounts: body.writtenCounts,
        readBackCounts: body.readBackCounts,
        checksum: body.checksum ?? null,
        matches,
        confirmedAt: ctx.clock(),
      })
      .returning();
    const [unit] = await tx.select().from(units).where(eq(units.id, cal.unitId)).for('update');
    if (unit.currentCalibrationId === cal.id || !matches) {
      await tx
        .update(units)
        .set({ programmingMismatch: !matches, updatedAt: ctx.clock() })
        .where(eq(units.id, unit.id));
    }
    if (!matches) {
      await insertAudit(tx, {
        action: 'units.programming_mismatch',
        subjectType: 'unit',
        subjectId: unit.id,
        reason: `expected ${cal.offsetCounts}, written ${body.writtenCounts}, read back ${body.readBackCounts}`,
      });
    }
    await notifyLineEvent(tx, {
      type: 'programming.confirmed',
      stationId: station.stationId,
      unitId: unit.id,
      serial: unit.serial,
      calibrationId: cal.id,
      matches,
      at: row.confirmedAt.toISOString(),
    });
    return { matches, expectedCounts: cal.offsetCounts!, confirmedAt: row.confirmedAt.toISOString() };
  });
}

/** Builds the view of calibrations (newest first) for a set of rows. */
export async function calibrationViews(
  db: DbOrTx,
  where: ReturnType<typeof eq>,
  limit = 50,
): Promise<CalibrationView[]> {
  const rows = await db
    .select({ cal: calibrations, m: measurements, recipe: recipes, station: stations, unit: units })
    .from(calibrations)
    .innerJoin(measurements, eq(measurements.id, calibrations.measurementPk))
    .innerJoin(recipes, eq(recipes.id, calibrations.recipeId))
    .innerJoin(stations, eq(stations.id, calibrations.stationId))
    .innerJoin(units, eq(units.id, calibrations.unitId))
    .where(where)
    .orderBy(desc(calibrations.computedAt))
    .limit(limit);
  const out: CalibrationView[] = [];
  const newestOfUnit = new Map<string, string>();
  for (const r of rows) {
    if (!newestOfUnit.has(r.unit.id)) {
      const [newest] = await db
        .select({ id: calibrations.id })
        .from(calibrations)
        .where(eq(calibrations.unitId, r.unit.id))
        .orderBy(desc(calibrations.computedAt))
        .limit(1);
      newestOfUnit.set(r.unit.id, newest.id);
    }
    const [conf] = await db
      .select()
      .from(programmingConfirmations)
      .where(eq(programmingConfirmations.calibrationId, r.cal.id))
      .orderBy(desc(programmingConfirmations.confirmedAt))
      .limit(1);
    const isError = 'error' in r.cal.result;
    out.push({
      calibrationId: r.cal.id,
      measurementId: r.m.measurementId,
      serial: r.unit.serial,
      stationId: r.station.id,
      stationName: r.station.name,
      recipe: { id: r.recipe.id, version: r.recipe.version, name: r.recipe.body.name ?? null },
      engineVersion: r.cal.engineVersion,
      verdict: r.cal.verdict,
      offsetDeg: r.cal.offsetDeg,
      offsetCounts: r.cal.offsetCounts,
      attempt: r.cal.attempt,
      maxAttempts: r.recipe.body.maxAttempts,
      computedAt: r.cal.computedAt.toISOString(),
      receivedAt: r.m.receivedAt.toISOString(),
      computeMs: r.cal.computeMs,
      nextAction: nextActionFor(
        r.cal.verdict,
        r.cal.attempt,
        r.recipe.body.maxAttempts,
        // A hold the unit is under now matters for its newest calibration, not for its history.
        r.unit.status === 'on_hold' && newestOfUnit.get(r.unit.id) === r.cal.id
          ? (r.unit.holdReason ?? 'no reason given')
          : null,
      ),
      result: isError ? null : (r.cal.result as CalibrationResult),
      error: isError ? (r.cal.result as { error: CalibrationView['error'] }).error : null,
      programming: conf
        ? {
            status: conf.matches ? 'confirmed' : 'mismatch',
            expectedCounts: conf.expectedCounts,
            writtenCounts: conf.writtenCounts,
            readBackCounts: conf.readBackCounts,
            checksum: conf.checksum,
            confirmedAt: conf.confirmedAt.toISOString(),
          }
        : {
            status: 'pending',
            expectedCounts: r.cal.offsetCounts,
            writtenCounts: null,
            readBackCounts: null,
            checksum: null,
            confirmedAt: null,
          },
    });
  }
  return out;
}

export async function measurementResult(db: DbOrTx, station: StationPrincipal | null, measurementId: string) {
  const m = await findMeasurement(db, measurementId);
  if (!m || (station && m.stationId !== station.stationId)) throw measurementErrors.notFound(measurementId);
  const [view] = await calibrationViews(db, eq(calibrations.measurementPk, m.id), 1);
  return { measurement: m, view: view ?? null };
}
