import { and, asc, desc, eq, inArray, sql } from 'drizzle-orm';
import type { Db, DbOrTx } from '#server/db/client';
import type { SessionUser } from '#server/lib/auth';
import { insertAudit } from '../audit/audit.repository';
import { findModelWithActiveRecipe } from '../recipes/recipes.repository';
import { stationNamesByIds } from '../stations/stations.service';
import { findUnitBySerial } from '../units/units.service';
import { certifiedValue } from '#shared/statistics/gauge-study';
import type {
  CertifiedFrom,
  CertifyReferenceUnit,
  CreateReferenceUnit,
  QualificationRunView,
  ReferenceUnitView,
} from '#shared/schemas/qualification';
import { qualificationErrors } from './qualification.errors';
import { runViewWith } from './qualification-readings.service';
import { gaugeStudies, qualificationRuns, referenceUnits } from './qualification.table';

// Reference units: which units are kept as references, their certified values and what became of them.

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
