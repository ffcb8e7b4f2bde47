import type pg from 'pg';
import { and, asc, desc, eq, gt, inArray, sql } from 'drizzle-orm';
import type { Db, DbOrTx } from '#server/db/client';
import type { SessionUser } from '#server/lib/auth';
import type { Logger } from '#server/lib/logger';
import type { Mailer } from '../mail/mail.service';
import { insertAudit } from '../audit/audit.repository';
import { findStation } from '../stations/stations.service';
import { countStationMeasurementsSince } from '../measurements/measurements.repository';
import { decideQualification, type QualificationDecision } from '#shared/calibration/qualification-state';
import type { PlantShifts, QualificationPolicy, QualificationState } from '#shared/schemas/qualification';
import { qualificationErrors } from './qualification.errors';
import {
  plantShifts,
  qualificationOverrides,
  qualificationPolicies,
  qualificationRuns,
  referenceUnits,
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
  const { rows } = await deps.pool.query<ProductionFacts>(
    `select ${productionFactsSql('$1', '$2')}`,
    [stationId, serial ?? ''],
  );
  await assertProductionAllowedGiven(deps, stationId, serial, rows[0]);
}

/** What the production gate needs to know first, as `productionFactsSql` selects it. */
export interface ProductionFacts {
  has_policy: boolean;
  reference_unit: boolean;
}

/**
 * The gate's facts as two select-list columns (`has_policy`, `reference_unit`), for a statement that
 * gathers them beside its own (the station intake's first statement): the gate then costs no round trip
 * of its own in the common case. The arguments are SQL (placeholders) giving the station's id and the
 * normalised serial.
 */
export function productionFactsSql(stationIdSql: string, serialSql: string): string {
  return `exists (select 1 from qualification_policies where station_id = ${stationIdSql}) as has_policy,
          exists (select 1 from reference_units where serial = ${serialSql} and retired_at is null) as reference_unit`;
}

/** The gate (see `assertProductionAllowed`) from facts read already; reads more only under a policy. */
export async function assertProductionAllowedGiven(
  deps: Pick<QualificationDeps, 'db' | 'pool' | 'clock' | 'timeZone'>,
  stationId: string,
  serial: string | undefined,
  facts: ProductionFacts,
): Promise<void> {
  if (facts.reference_unit) throw qualificationErrors.referenceAtProduction(serial!);
  if (!facts.has_policy) return;
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
