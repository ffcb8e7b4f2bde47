import { randomUUID } from 'node:crypto';
import type pg from 'pg';
import type { Db } from '#server/db/client';
import type { SessionUser, StationPrincipal } from '#server/lib/auth';
import { createRng } from '#shared/simulation/rng';
import { registerUnit } from '../units/units.service';
import { acceptQualificationReading } from '../qualification/qualification-readings.service';
import { certifyReferenceUnit, createReferenceUnit } from '../qualification/reference-units.service';
import { setPolicy, setShifts } from '../qualification/qualification.service';
import { acceptStudyReading, createStudy } from '../qualification/gauge-studies.service';
import { DEMO_MODELS, DEMO_STATIONS } from './demo-line.scenario';
import { referenceSerial, referenceUnitTruth, simulateRun } from './demo-physics';

const DAY_MS = 24 * 3_600_000;
/** The demo plant's shifts (local plant time). */
export const DEMO_SHIFTS = [
  { name: 'Early', startsAt: '06:00' },
  { name: 'Late', startsAt: '14:00' },
  { name: 'Night', startsAt: '22:00' },
];
const CERTIFY_READINGS = 5;
const TOLERANCE_DEG = 0.3;

/**
 * The demo's station qualification: one reference unit per model, certified from readings on that
 * model's steady two-direction station, every station's policy (each shift start and every 8 h), a
 * reading at each early and late shift start of the fortnight (the drifting forward-only rig's bias
 * shows on its bias chart and fails it), and the reading of this morning at `now`, so the steady
 * stations start qualified; and one finished gauge study per model. Readings go through the qualification service with a walking clock;
 * no mail is sent for the seeded history.
 */
export async function seedDemoQualification(
  deps: { db: Db; pool: pg.Pool },
  actor: SessionUser,
  catalog: Map<string, { modelId: string }>,
  principals: Map<string, StationPrincipal>,
  span: { fortnightStart: number; now: Date; timeZone: string },
): Promise<{ readings: number }> {
  let readings = 0;
  const rng = createRng(5701);
  const read = async (stationName: string, modelCode: string, at: number, driftFraction: number) => {
    const station = DEMO_STATIONS.find((s) => s.name === stationName)!;
    const model = DEMO_MODELS.find((m) => m.code === modelCode)!;
    const serial = referenceSerial(modelCode);
    const measurement = simulateRun(
      model,
      referenceUnitTruth(model, serial),
      { rig: station.rig, driftFraction, attempt: 2 },
      rng,
      { measurementId: randomUUID(), serial },
    );
    const q = { ...deps, clock: () => new Date(at), timeZone: span.timeZone, mailer: null };
    await acceptQualificationReading(q, principals.get(stationName)!, measurement);
    readings++;
  };

  await setShifts(deps.db, actor, { shifts: DEMO_SHIFTS });
  const refIds = new Map<string, string>();
  for (const model of DEMO_MODELS) {
    const serial = referenceSerial(model.code);
    await registerUnit(deps.db, actor, { serial, modelId: catalog.get(model.code)!.modelId });
    const ref = await createReferenceUnit(deps.db, actor, { serial, toleranceDeg: TOLERANCE_DEG });
    refIds.set(model.code, ref.id);
    // Certified on the model's own steady station the day before the fortnight.
    const home = DEMO_STATIONS.find((s) => s.rig.directions === 'both' && s.modelCodes.includes(model.code))!;
    for (let i = 0; i < CERTIFY_READINGS; i++) {
      await read(home.name, model.code, span.fortnightStart - DAY_MS + (9 * 60 + 10 * i) * 60_000, 0);
    }
    await certifyReferenceUnit(deps.db, actor, ref.id, {
      stationId: principals.get(home.name)!.stationId,
      readings: CERTIFY_READINGS,
    });
  }
  for (const s of DEMO_STATIONS) {
    await setPolicy(
      deps.db,
      actor,
      principals.get(s.name)!.stationId,
      {
        atShiftStart: true,
        everyHours: 8,
        everyUnits: null,
        referenceUnitIds: s.modelCodes.map((c) => refIds.get(c)!),
      },
      new Date(span.fortnightStart),
    );
  }
  for (let day = 0; day < 14; day++) {
    for (const minutes of [6 * 60 + 4, 14 * 60 + 4]) {
      const at = span.fortnightStart + day * DAY_MS + minutes * 60_000;
      for (const s of DEMO_STATIONS) {
        const code = s.modelCodes[day % s.modelCodes.length];
        await read(s.name, code, at, (at - span.fortnightStart) / (14 * DAY_MS));
      }
    }
  }
  // One finished gauge study per model: 10 parts, the model's stations as appraisers, 3 trials, run on the
  // last day of the fortnight in the planned random order.
  let t = span.fortnightStart + 13 * DAY_MS + 10 * 3_600_000;
  for (const model of DEMO_MODELS) {
    const modelId = catalog.get(model.code)!.modelId;
    const code = model.code.replace(/^[A-Z]+-/, '');
    const partSerials = Array.from({ length: 10 }, (_, i) => `GS-${code}-${String(i + 1).padStart(2, '0')}`);
    for (const serial of partSerials) await registerUnit(deps.db, actor, { serial, modelId });
    const appraisers = DEMO_STATIONS.filter((s) => s.modelCodes.includes(model.code));
    const study = await createStudy(
      deps.db,
      actor,
      {
        name: `${model.code} line stations, fortnight close`,
        modelId,
        appraiserKind: 'station',
        appraiserIds: appraisers.map((s) => principals.get(s.name)!.stationId),
        partSerials,
        trials: 3,
        toleranceDeg: 2,
        seed: 57,
      },
      new Date(t),
    );
    for (const step of study.runOrder) {
      const station = appraisers[step.appraiser];
      const serial = partSerials[step.part];
      const measurement = simulateRun(
        model,
        referenceUnitTruth(model, serial),
        { rig: station.rig, driftFraction: 13 / 14, attempt: 2 },
        rng,
        { measurementId: randomUUID(), serial },
      );
      t += 50_000;
      const at = t;
      await acceptStudyReading(deps.db, () => new Date(at), principals.get(station.name)!, study.id, {
        measurement,
      });
      readings++;
    }
  }

  const nowMs = span.now.getTime();
  for (const s of DEMO_STATIONS)
    await read(s.name, s.modelCodes[0], nowMs, Math.min(1, (nowMs - span.fortnightStart) / (14 * DAY_MS)));
  return { readings };
}
