import type pg from 'pg';
import { and, asc, desc, eq, gt, inArray, isNull, sql } from 'drizzle-orm';
import type { Db, DbOrTx } from '#server/db/client';
import type { SessionUser, StationPrincipal } from '#server/lib/auth';
import type { Logger } from '#server/lib/logger';
import type { Mailer } from '../mail/mail.service';
import { insertAudit } from '../audit/audit.repository';
import { raiseQualificationAlert } from '../alerts/alerts.service';
import { formatSignedDeg } from '#shared/wording';
import { findModelWithActiveRecipe } from '../recipes/recipes.repository';
import { findStation, stationNamesByIds } from '../stations/stations.service';
import { findUnitBySerial } from '../units/units.service';
import { listUsers } from '../users/users.repository';
import { countStationMeasurementsSince } from '../measurements/measurements.repository';
import { ENGINE_VERSION } from '#shared/calibration';
import {
  decideQualification,
  type QualificationDecision,
} from '#shared/calibration/qualification-state';
import { certifiedValue } from '#shared/statistics/gauge-study';
import { measurementSchema, type Measurement } from '#shared/schemas/measurement';
import type {
  CertifiedFrom,
  CertifyReferenceUnit,
  CreateReferenceUnit,
  PlantShifts,
  QualificationPolicy,
  QualificationRunView,
  QualificationState,
  ReferenceUnitView,
} from '#shared/schemas/qualification';
import { qualificationErrors } from './qualification.errors';
import { computeReading } from './reading-engine';
import {
  gaugeStudies,
  plantShifts,
  qualificationOverrides,
  qualificationPolicies,
  qualificationRuns,
  referenceUnits,
  type QualificationRunRecord,
} from './qualification.table';

export interface QualificationDeps {
  db: Db;
  pool: pg.Pool;
  clock: () => Date;
  timeZone: string;
  logger?: Logger;
  mailer?: Mailer | null;
  publicUrl?: string;
}

// ---------------------------------------------------------------------------------------------------
// Reference units

async function referenceViews(
  db: DbOrTx,
  rows: (typeof referenceUnits.$inferSelect)[],
): Promise<ReferenceUnitView[]> {
  const codes = new Map<string, string>();
  for (const id of new Set(rows.map((r) => r.modelId))) {
    codes.set(id, (await findModelWithActiveRecipe(db, id))?.model.code ?? '?');
  }
  return rows.map((r) => ({
    id: r.id,
    serial: r.serial,
    unitId: r.unitId,
    modelId: r.modelId,
    modelCode: codes.get(r.modelId) ?? '?',
    certifiedOffsetDeg: r.certifiedOffsetDeg,
    toleranceDeg: r.toleranceDeg,
    certifiedFrom: r.certifiedFrom ?? null,
    retiredAt: r.retiredAt?.toISOString() ?? null,
  }));
}

export async function listReferenceUnits(db: DbOrTx): Promise<ReferenceUnitView[]> {
  return referenceViews(db, await db.select().from(referenceUnits).orderBy(asc(referenceUnits.createdAt)));
}

/** Marks a registered unit as a reference unit of its model (audited). */
export async function createReferenceUnit(
  db: Db,
  actor: SessionUser,
  input: CreateReferenceUnit,
): Promise<ReferenceUnitView> {
  const unit = await findUnitBySerial(db, input.serial);
  if (!unit) throw qualificationErrors.unitNotFound(input.serial);
  return db.transaction(async (tx) => {
    const [row] = await tx
      .insert(referenceUnits)
      .values({
        unitId: unit.id,
        serial: unit.serial,
        modelId: unit.modelId,
        certifiedOffsetDeg: input.certifiedOffsetDeg ?? null,
        toleranceDeg: input.toleranceDeg,
        createdBy: actor.id,
      })
      .onConflictDoNothing()
      .returning();
    if (!row) throw qualificationErrors.alreadyReference(unit.serial);
    await insertAudit(tx, {
      actorId: actor.id,
      actorName: actor.displayName,
      action: 'qualification.reference_created',
      subjectType: 'unit',
      subjectId: unit.id,
      after: { certifiedOffsetDeg: row.certifiedOffsetDeg, toleranceDeg: row.toleranceDeg },
    });
    return (await referenceViews(tx, [row]))[0];
  });
}

/**
 * Sets a reference unit's certified value from its readings at one station: the readings the engineer
 * chose (each one left out named with a reason) or the latest N. The value is their mean, with the
 * expanded uncertainty 2·s/√n beside it (audited, with the readings used and those left out).
 */
export async function certifyReferenceUnit(
  db: Db,
  actor: SessionUser,
  id: string,
  input: CertifyReferenceUnit,
): Promise<ReferenceUnitView> {
  const [ref] = await db.select().from(referenceUnits).where(eq(referenceUnits.id, id));
  if (!ref) throw qualificationErrors.referenceNotFound();
  const atStation = and(
    eq(qualificationRuns.referenceUnitId, id),
    eq(qualificationRuns.stationId, input.stationId),
  );
  const excluded = input.excluded ?? [];
  let rows: { id: string; offsetDeg: number }[];
  if (input.readingIds) {
    const wanted = [...new Set([...input.readingIds, ...excluded.map((x) => x.readingId)])];
    const found = await db
      .select({ id: qualificationRuns.id, offsetDeg: qualificationRuns.offsetDeg })
      .from(qualificationRuns)
      .where(and(atStation, inArray(qualificationRuns.id, wanted)));
    if (found.length !== wanted.length) throw qualificationErrors.readingNotOfUnit();
    const byId = new Map(found.map((r) => [r.id, r]));
    rows = input.readingIds.map((rid) => byId.get(rid)!);
  } else {
    const want = input.readings ?? 0;
    rows = await db
      .select({ id: qualificationRuns.id, offsetDeg: qualificationRuns.offsetDeg })
      .from(qualificationRuns)
      .where(atStation)
      .orderBy(desc(qualificationRuns.measuredAt))
      .limit(want);
    if (rows.length < want) throw qualificationErrors.notEnoughReadings(rows.length, want);
  }
  const c = certifiedValue(rows.map((r) => r.offsetDeg));
  return db.transaction(async (tx) => {
    const certifiedFrom: CertifiedFrom = {
      stationId: input.stationId,
      n: c.n,
      sdDeg: c.sd,
      expandedUncertaintyDeg: c.expandedUncertainty,
      readingIds: rows.map((r) => r.id),
      excluded: excluded.map((x) => ({ readingId: x.readingId, reason: x.reason })),
    };
    const [row] = await tx
      .update(referenceUnits)
      .set({ certifiedOffsetDeg: c.mean, certifiedFrom })
      .where(eq(referenceUnits.id, id))
      .returning();
    await insertAudit(tx, {
      actorId: actor.id,
      actorName: actor.displayName,
      action: 'qualification.reference_certified',
      subjectType: 'unit',
      subjectId: ref.unitId,
      reason: excluded.length
        ? excluded.map((x) => `left out ${x.readingId}: ${x.reason}`).join('; ')
        : undefined,
      before: { certifiedOffsetDeg: ref.certifiedOffsetDeg, certifiedFrom: ref.certifiedFrom },
      after: { certifiedOffsetDeg: c.mean, ...certifiedFrom },
    });
    return (await referenceViews(tx, [row]))[0];
  });
}

/** A reference unit's readings at one station, newest first (what an engineer certifies from). */
export async function referenceReadings(
  db: DbOrTx,
  id: string,
  stationId: string,
): Promise<QualificationRunView[]> {
  const [ref] = await db.select().from(referenceUnits).where(eq(referenceUnits.id, id));
  if (!ref) throw qualificationErrors.referenceNotFound();
  const rows = await db
    .select()
    .from(qualificationRuns)
    .where(and(eq(qualificationRuns.referenceUnitId, id), eq(qualificationRuns.stationId, stationId)))
    .orderBy(desc(qualificationRuns.measuredAt))
    .limit(100);
  const names = await stationNamesByIds(db, [stationId]);
  return rows.map((r) => runViewWith(r, names.get(r.stationId) ?? '?'));
}

// ---------------------------------------------------------------------------------------------------
// Policy, shifts and state

export async function getPolicy(db: DbOrTx, stationId: string): Promise<QualificationPolicy | null> {
  const [p] = await db
    .select()
    .from(qualificationPolicies)
    .where(eq(qualificationPolicies.stationId, stationId));
  return p
    ? {
        atShiftStart: p.atShiftStart,
        everyHours: p.everyHours,
        everyUnits: p.everyUnits,
        referenceUnitIds: p.referenceUnitIds,
      }
    : null;
}

/** Sets (or replaces) a station's qualification policy (audited). */
export async function setPolicy(
  db: Db,
  actor: SessionUser,
  stationId: string,
  policy: QualificationPolicy,
  now: Date,
): Promise<QualificationPolicy> {
  const station = await findStation(db, stationId);
  if (!station) throw qualificationErrors.stationNotFound();
  const refs = await db
    .select()
    .from(referenceUnits)
    .where(inArray(referenceUnits.id, policy.referenceUnitIds));
  if (
    refs.length !== new Set(policy.referenceUnitIds).size ||
    refs.some((r) => r.retiredAt || !station.allowedModelIds.includes(r.modelId))
  ) {
    throw qualificationErrors.referenceOfOtherStation();
  }
  const before = await getPolicy(db, stationId);
  await db.transaction(async (tx) => {
    const values = { ...policy, updatedBy: actor.id, updatedAt: now };
    await tx
      .insert(qualificationPolicies)
      .values({ stationId, ...values })
      .onConflictDoUpdate({ target: qualificationPolicies.stationId, set: values });
    await insertAudit(tx, {
      actorId: actor.id,
      actorName: actor.displayName,
      action: 'qualification.policy_set',
      subjectType: 'station',
      subjectId: stationId,
      before,
      after: policy,
    });
  });
  return policy;
}

const toHhMm = (m: number) =>
  `${String(Math.floor(m / 60)).padStart(2, '0')}:${String(m % 60).padStart(2, '0')}`;

export async function getShifts(db: DbOrTx): Promise<PlantShifts> {
  const rows = await db.select().from(plantShifts).orderBy(asc(plantShifts.startMinute));
  return { shifts: rows.map((r) => ({ name: r.name, startsAt: toHhMm(r.startMinute) })) };
}

/** Replaces the plant's shift list (audited). */
export async function setShifts(db: Db, actor: SessionUser, input: PlantShifts): Promise<PlantShifts> {
  const before = await getShifts(db);
  await db.transaction(async (tx) => {
    await tx.delete(plantShifts);
    if (input.shifts.length) {
      await tx.insert(plantShifts).values(
        input.shifts.map((s) => {
          const [h, m] = s.startsAt.split(':').map(Number);
          return { name: s.name, startMinute: h * 60 + m };
        }),
      );
    }
    await insertAudit(tx, {
      actorId: actor.id,
      actorName: actor.displayName,
      action: 'qualification.shifts_set',
      before,
      after: input,
    });
  });
  return getShifts(db);
}

/** Everything the lockout rules need about one station, and their decision. */
export async function stationQualification(
  deps: Pick<QualificationDeps, 'db' | 'pool' | 'clock' | 'timeZone'>,
  stationId: string,
): Promise<QualificationState & { decision: QualificationDecision }> {
  const now = deps.clock();
  const policy = await getPolicy(deps.db, stationId);
  const refs = policy?.referenceUnitIds.length
    ? await deps.db.select().from(referenceUnits).where(inArray(referenceUnits.id, policy.referenceUnitIds))
    : [];
  const referenceSerials = refs.map((r) => r.serial);
  const [last] = await deps.db
    .select()
    .from(qualificationRuns)
    .where(and(eq(qualificationRuns.stationId, stationId), sql`${qualificationRuns.verdict} <> 'recorded'`))
    .orderBy(desc(qualificationRuns.measuredAt))
    .limit(1);
  const [lastPassRow] =
    last?.verdict === 'pass'
      ? [last]
      : await deps.db
          .select()
          .from(qualificationRuns)
          .where(and(eq(qualificationRuns.stationId, stationId), eq(qualificationRuns.verdict, 'pass')))
          .orderBy(desc(qualificationRuns.measuredAt))
          .limit(1);
  const [override] = await deps.db
    .select()
    .from(qualificationOverrides)
    .where(and(eq(qualificationOverrides.stationId, stationId), gt(qualificationOverrides.expiresAt, now)))
    .orderBy(desc(qualificationOverrides.expiresAt))
    .limit(1);
  const shifts = policy?.atShiftStart ? await deps.db.select().from(plantShifts) : [];
  const unitsSincePass =
    policy?.everyUnits != null && lastPassRow
      ? await countStationMeasurementsSince(deps.pool, stationId, lastPassRow.measuredAt)
      : 0;
  const decision = decideQualification({
    policy: policy
      ? {
          atShiftStart: policy.atShiftStart,
          everyHours: policy.everyHours,
          everyUnits: policy.everyUnits,
          referenceSerials,
        }
      : null,
    shiftStartMinutes: shifts.map((s) => s.startMinute),
    timeZone: deps.timeZone,
    lastPass: lastPassRow?.measuredAt ?? null,
    lastFailure:
      last?.verdict === 'fail'
        ? {
            at: last.measuredAt,
            serial: last.serial,
            deviationDeg: last.deviationDeg,
            toleranceDeg: last.toleranceDeg,
          }
        : null,
    unitsSincePass,
    override: override ? { until: override.expiresAt, reason: override.reason } : null,
    now,
  });
  return {
    stationId,
    kind: decision.kind,
    locked: decision.locked,
    validUntil: decision.validUntil?.toISOString() ?? null,
    unitsLeft: decision.unitsLeft,
    sentence: decision.sentence,
    referenceSerials,
    timeZone: deps.timeZone,
    lastRun: last
      ? {
          id: last.id,
          serial: last.serial,
          verdict: last.verdict,
          offsetDeg: last.offsetDeg,
          deviationDeg: last.deviationDeg,
          toleranceDeg: last.toleranceDeg,
          measuredAt: last.measuredAt.toISOString(),
        }
      : null,
    decision,
  };
}

/**
 * The gate in front of production posts: a reference unit is never measured as production, and a
 * station whose qualification is overdue or failed is refused with 423 before anything is stored.
 */
export async function assertProductionAllowed(
  deps: Pick<QualificationDeps, 'db' | 'pool' | 'clock' | 'timeZone'>,
  stationId: string,
  serial: string | undefined,
): Promise<void> {
  // One cheap statement answers the common case (no policy, not a reference unit).
  const { rows } = await deps.pool.query<{ has_policy: boolean; reference: boolean }>(
    `select exists (select 1 from qualification_policies where station_id = $1) as has_policy,
            exists (select 1 from reference_units where serial = $2 and retired_at is null) as reference`,
    [stationId, serial ?? ''],
  );
  if (rows[0].reference) throw qualificationErrors.referenceAtProduction(serial!);
  if (!rows[0].has_policy) return;
  const state = await stationQualification(deps, stationId);
  if (state.decision.locked) {
    throw qualificationErrors.locked(state.kind === 'failed' ? 'failed' : 'overdue', state.sentence);
  }
}

/** Lifts a station's lock for `minutes` with a reason (audited); the lock returns when it expires. */
export async function grantOverride(
  deps: Pick<QualificationDeps, 'db' | 'clock'>,
  actor: SessionUser,
  stationId: string,
  input: { reason: string; minutes: number },
) {
  const station = await findStation(deps.db, stationId);
  if (!station) throw qualificationErrors.stationNotFound();
  const now = deps.clock();
  const expiresAt = new Date(now.getTime() + input.minutes * 60_000);
  return deps.db.transaction(async (tx) => {
    const [row] = await tx
      .insert(qualificationOverrides)
      .values({ stationId, reason: input.reason, grantedBy: actor.id, grantedAt: now, expiresAt })
      .returning();
    await insertAudit(tx, {
      actorId: actor.id,
      actorName: actor.displayName,
      action: 'qualification.lock_lifted',
      subjectType: 'station',
      subjectId: stationId,
      reason: input.reason,
      after: { expiresAt: expiresAt.toISOString(), minutes: input.minutes },
    });
    return { id: row.id, stationId, reason: row.reason, expiresAt: expiresAt.toISOString() };
  });
}

// ---------------------------------------------------------------------------------------------------
// Readings of reference units

/**
 * A station's reading of a reference unit, posted with the ordinary measurement contract. It is
 * computed at once with the model's active recipe and judged against the certified value; it is stored
 * in the qualification records only, so the reference unit, its attempts and its offset never change,
 * it counts as no production unit and no traveler is made. Idempotent on `measurementId`.
 */
export async function acceptQualificationReading(
  deps: QualificationDeps,
  station: StationPrincipal,
  measurement: Measurement,
): Promise<{ run: QualificationRunView; state: QualificationState; repeated: boolean }> {
  const [existing] = await deps.db
    .select()
    .from(qualificationRuns)
    .where(eq(qualificationRuns.measurementId, measurement.measurementId));
  if (existing) {
    if (
      existing.stationId !== station.stationId ||
      JSON.stringify(measurementSchema.parse(existing.payload)) !== JSON.stringify(measurement)
    ) {
      throw qualificationErrors.idConflict(measurement.measurementId);
    }
    const { decision: _d, ...state } = await stationQualification(deps, station.stationId);
    return { run: await runView(deps.db, existing), state, repeated: true };
  }
  const unit = await findUnitBySerial(deps.db, measurement.serial);
  if (!unit) throw qualificationErrors.notReference(measurement.serial);
  const [ref] = await deps.db
    .select()
    .from(referenceUnits)
    .where(and(eq(referenceUnits.unitId, unit.id), isNull(referenceUnits.retiredAt)));
  if (!ref) throw qualificationErrors.notReference(unit.serial);
  const stationRow = await findStation(deps.db, station.stationId);
  if (!stationRow?.allowedModelIds.includes(ref.modelId)) {
    throw qualificationErrors.referenceNotForStation(unit.serial, station.stationName);
  }
  const { recipe, result, offsetDeg, stored } = await computeReading(
    deps.db,
    ref.modelId,
    measurement,
    unit.serial,
  );
  const certified = ref.certifiedOffsetDeg;
  const deviationDeg = certified === null ? null : offsetDeg - certified;
  const verdict =
    deviationDeg === null
      ? 'recorded'
      : Math.abs(deviationDeg) <= ref.toleranceDeg && result.verdict === 'pass'
        ? 'pass'
        : 'fail';
  const row = await deps.db.transaction(async (tx) => {
    const [inserted] = await tx
      .insert(qualificationRuns)
      .values({
        measurementId: measurement.measurementId,
        stationId: station.stationId,
        referenceUnitId: ref.id,
        serial: unit.serial,
        recipeId: recipe.id,
        engineVersion: ENGINE_VERSION,
        payload: measurement,
        verdict,
        offsetDeg,
        certifiedOffsetDeg: certified,
        toleranceDeg: ref.toleranceDeg,
        deviationDeg,
        result: stored as object,
        operatorId: stationRow.attendedBy,
        measuredAt: deps.clock(),
      })
      .onConflictDoNothing()
      .returning();
    // A failure is an alert in the engineers' list as well as an e-mail; both or neither with the reading.
    if (inserted?.verdict === 'fail') {
      await raiseQualificationAlert(tx, {
        stationId: station.stationId,
        modelId: ref.modelId,
        ruleText: `Reference unit ${unit.serial} read ${formatSignedDeg(inserted.deviationDeg ?? 0, 2)} from its certified value (allowed ± ${ref.toleranceDeg.toFixed(2)}°): the station is locked`,
        point: {
          serial: unit.serial,
          unitId: unit.id,
          calibrationId: inserted.id,
          value: inserted.offsetDeg,
          at: inserted.measuredAt.toISOString(),
        },
        at: inserted.measuredAt,
      });
    }
    return inserted;
  });
  if (!row) return acceptQualificationReading(deps, station, measurement);
  if (verdict === 'fail') await mailEngineersAboutFailure(deps, row, station.stationName);
  const { decision: _d, ...state } = await stationQualification(deps, station.stationId);
  return { run: await runView(deps.db, row), state, repeated: false };
}

async function mailEngineersAboutFailure(
  deps: QualificationDeps,
  run: QualificationRunRecord,
  stationName: string,
) {
  if (!deps.mailer) return;
  const engineers = (await listUsers(deps.db)).filter((u) => u.role === 'engineer' && u.email && !u.disabled);
  const dev = run.deviationDeg ?? 0;
  for (const person of engineers) {
    try {
      await deps.mailer.send({
        to: person.email!,
        subject: `Phasewright: station ${stationName} failed its qualification and is locked`,
        text: [
          `Hello ${person.displayName},`,
          '',
          `Station ${stationName} read reference unit ${run.serial} at ${run.offsetDeg.toFixed(2)}°, ` +
            `${formatSignedDeg(dev)} from its certified ${run.certifiedOffsetDeg?.toFixed(2)}° ` +
            `(allowed ± ${run.toleranceDeg.toFixed(2)}°).`,
          'The station refuses production units until it reads a reference unit within tolerance, or an engineer lifts the lock for a while with a reason.',
          '',
          `Bias chart and lock: ${deps.publicUrl ?? ''}/qualification`,
        ].join('\n'),
      });
    } catch (e) {
      // The failure is recorded and the station is locked; a mail relay that is down must not undo that.
      deps.logger?.warn({ err: e, to: person.email }, 'qualification mail could not be sent');
    }
  }
}

async function runView(db: DbOrTx, r: QualificationRunRecord): Promise<QualificationRunView> {
  const names = await stationNamesByIds(db, [r.stationId]);
  return runViewWith(r, names.get(r.stationId) ?? '?');
}

function runViewWith(r: QualificationRunRecord, stationName: string): QualificationRunView {
  return {
    id: r.id,
    measurementId: r.measurementId,
    stationId: r.stationId,
    stationName,
    serial: r.serial,
    verdict: r.verdict,
    offsetDeg: r.offsetDeg,
    certifiedOffsetDeg: r.certifiedOffsetDeg,
    toleranceDeg: r.toleranceDeg,
    deviationDeg: r.deviationDeg,
    measuredAt: r.measuredAt.toISOString(),
  };
}

/** A station's reference readings, oldest first (the bias chart: deviation from the certified value over time). */
export async function stationRuns(
  db: DbOrTx,
  stationId: string,
  limit: number,
): Promise<QualificationRunView[]> {
  const rows = await db
    .select()
    .from(qualificationRuns)
    .where(eq(qualificationRuns.stationId, stationId))
    .orderBy(desc(qualificationRuns.measuredAt))
    .limit(limit);
  const names = await stationNamesByIds(db, [stationId]);
  return rows.reverse().map((r) => runViewWith(r, names.get(r.stationId) ?? '?'));
}

export async function findRun(db: DbOrTx, id: string): Promise<QualificationRunView> {
  const [row] = await db.select().from(qualificationRuns).where(eq(qualificationRuns.id, id));
  if (!row) throw qualificationErrors.runNotFound();
  return runView(db, row);
}

/**
 * What qualification made of a unit, for its record: kept as a reference unit (with its certified value and
 * how often stations read it), and the gauge studies it is a part of. Readings never change the unit.
 */
export async function qualificationUseOfUnit(db: DbOrTx, unitId: string) {
  const [[ref], studies] = await Promise.all([
    db
      .select({
        id: referenceUnits.id,
        createdAt: referenceUnits.createdAt,
        certifiedOffsetDeg: referenceUnits.certifiedOffsetDeg,
        toleranceDeg: referenceUnits.toleranceDeg,
        retiredAt: referenceUnits.retiredAt,
        readings:
          sql<number>`(select count(*) from qualification_runs r where r.reference_unit_id = ${referenceUnits.id})`.mapWith(
            Number,
          ),
      })
      .from(referenceUnits)
      .where(eq(referenceUnits.unitId, unitId)),
    db
      .select({ name: gaugeStudies.name, createdAt: gaugeStudies.createdAt, status: gaugeStudies.status })
      .from(gaugeStudies)
      .where(sql`${gaugeStudies.partUnitIds} @> jsonb_build_array(${unitId}::text)`)
      .orderBy(asc(gaugeStudies.createdAt)),
  ]);
  return { reference: ref ?? null, studies };
}
