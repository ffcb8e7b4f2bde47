import { and, desc, eq, isNull } from 'drizzle-orm';
import type { DbOrTx } from '#server/db/client';
import type { StationPrincipal } from '#server/lib/auth';
import { raiseQualificationAlert } from '../alerts/alerts.service';
import { formatSignedDeg } from '#shared/wording';
import { findStation, stationNamesByIds } from '../stations/stations.service';
import { findUnitBySerial } from '../units/units.service';
import { listUsers } from '../users/users.repository';
import { ENGINE_VERSION } from '#shared/calibration';
import { measurementSchema, type Measurement } from '#shared/schemas/measurement';
import type { QualificationRunView, QualificationState } from '#shared/schemas/qualification';
import { qualificationErrors } from './qualification.errors';
import { stationQualification, type QualificationDeps } from './qualification.service';
import { computeReading } from './reading-engine';
import { qualificationRuns, referenceUnits, type QualificationRunRecord } from './qualification.table';

// Readings of reference units: a station's reading judged against the certified value, and the bias chart.

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

export function runViewWith(r: QualificationRunRecord, stationName: string): QualificationRunView {
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
