import { asc, eq } from 'drizzle-orm';
import type { Db, DbOrTx } from '#server/db/client';
import type { SessionUser, StationPrincipal } from '#server/lib/auth';
import { insertAudit } from '../audit/audit.repository';
import { findModelWithActiveRecipe } from '../recipes/recipes.repository';
import { findStation, stationNamesByIds } from '../stations/stations.service';
import { findUnitBySerial, serialsByIds } from '../units/units.service';
import { qualificationErrors, studyErrors } from './qualification.errors';
import { computeReading } from './reading-engine';
import { displayNamesByIds, findUserById, listUsers } from '../users/users.repository';
import { createRng } from '#shared/simulation/rng';
import type { Measurement } from '#shared/schemas/measurement';
import type { GaugeStudyCreate } from '#shared/schemas/qualification';
import {
  gaugeStudies,
  gaugeStudyMeasurements,
  type GaugeRunStep,
  type GaugeStudyRecord,
} from './qualification.table';

/**
 * The run order: each trial is a round in which every appraiser measures every part once, in an order
 * shuffled afresh for each appraiser and trial (so an appraiser cannot remember the last reading of a part).
 */
export function planRunOrder(
  parts: number,
  appraisers: number,
  trials: number,
  seed: number,
): GaugeRunStep[] {
  const rng = createRng(seed);
  const steps: GaugeRunStep[] = [];
  for (let trial = 1; trial <= trials; trial++) {
    for (let appraiser = 0; appraiser < appraisers; appraiser++) {
      const order = Array.from({ length: parts }, (_, i) => i);
      for (let i = order.length - 1; i > 0; i--) {
        const j = Math.floor(rng.next() * (i + 1));
        [order[i], order[j]] = [order[j], order[i]];
      }
      for (const part of order) steps.push({ part, appraiser, trial });
    }
  }
  return steps;
}

/** Creates a study after checking its design: parts are registered units of the model, appraisers can measure it. */
export async function createStudy(db: Db, actor: SessionUser, input: GaugeStudyCreate, now: Date) {
  const found = await findModelWithActiveRecipe(db, input.modelId);
  if (!found) throw studyErrors.badDesign('There is no such model.');
  if (new Set(input.appraiserIds).size !== input.appraiserIds.length)
    throw studyErrors.badDesign('Each appraiser may appear once.');
  const stationIds =
    input.appraiserKind === 'station' ? input.appraiserIds : input.stationId ? [input.stationId] : [];
  if (!stationIds.length) throw studyErrors.badDesign('Choose the station where the operators measure.');
  for (const id of stationIds) {
    const s = await findStation(db, id);
    if (!s) throw studyErrors.badDesign('One of the stations does not exist.');
    if (!s.allowedModelIds.includes(input.modelId))
      throw studyErrors.badDesign(`Station ${s.name} is not set up for model ${found.model.code}.`);
  }
  if (input.appraiserKind === 'operator') {
    for (const id of input.appraiserIds) {
      const u = await findUserById(db, id);
      if (!u || u.disabled)
        throw studyErrors.badDesign('One of the operators does not exist or is switched off.');
    }
  }
  const partUnitIds: string[] = [];
  for (const serial of input.partSerials) {
    const unit = await findUnitBySerial(db, serial);
    if (!unit) throw studyErrors.badDesign(`Unit ${serial} is not registered.`);
    if (unit.modelId !== input.modelId)
      throw studyErrors.badDesign(`Unit ${serial} is not a ${found.model.code}.`);
    if (partUnitIds.includes(unit.id)) throw studyErrors.badDesign(`Unit ${serial} is listed twice.`);
    partUnitIds.push(unit.id);
  }
  const seed = input.seed ?? Math.floor(Math.random() * 2 ** 31);
  const runOrder = planRunOrder(partUnitIds.length, input.appraiserIds.length, input.trials, seed);
  return db.transaction(async (tx) => {
    const [row] = await tx
      .insert(gaugeStudies)
      .values({
        name: input.name,
        modelId: input.modelId,
        appraiserKind: input.appraiserKind,
        appraiserIds: input.appraiserIds,
        stationId: input.appraiserKind === 'operator' ? stationIds[0] : null,
        partUnitIds,
        trials: input.trials,
        toleranceDeg: input.toleranceDeg,
        runOrder,
        createdBy: actor.id,
        createdAt: now,
      })
      .returning();
    await insertAudit(tx, {
      actorId: actor.id,
      actorName: actor.displayName,
      action: 'gauge_studies.created',
      subjectType: 'gauge_study',
      subjectId: row.id,
      after: {
        name: input.name,
        parts: partUnitIds.length,
        appraisers: input.appraiserIds.length,
        trials: input.trials,
      },
    });
    return row;
  });
}

export async function studyRow(db: DbOrTx, id: string): Promise<GaugeStudyRecord> {
  const [row] = await db.select().from(gaugeStudies).where(eq(gaugeStudies.id, id));
  if (!row) throw studyErrors.notFound();
  return row;
}

/** The latest reading of each (part, appraiser, trial): a repeated spoiled trial replaces the earlier one. */
export async function latestReadings(db: DbOrTx, studyId: string) {
  const rows = await db
    .select()
    .from(gaugeStudyMeasurements)
    .where(eq(gaugeStudyMeasurements.studyId, studyId))
    .orderBy(asc(gaugeStudyMeasurements.measuredAt), asc(gaugeStudyMeasurements.id));
  const latest = new Map<string, (typeof rows)[number]>();
  for (const r of rows) latest.set(`${r.part}:${r.appraiser}:${r.trial}`, r);
  return { all: rows, latest };
}

/** Which appraiser a post from this station is: the station itself, or the operator signed in at it. */
async function appraiserAt(db: DbOrTx, study: GaugeStudyRecord, stationId: string): Promise<number> {
  if (study.appraiserKind === 'station') return study.appraiserIds.indexOf(stationId);
  if (study.stationId !== stationId) return -1;
  const station = await findStation(db, stationId);
  return station?.attendedBy ? study.appraiserIds.indexOf(station.attendedBy) : -1;
}

export interface StudyNextStep {
  studyId: string;
  studyName: string;
  /** Null when this appraiser has measured everything it was asked to. */
  serial: string | null;
  part: number | null;
  trial: number | null;
  trials: number;
  doneByAppraiser: number;
  totalByAppraiser: number;
  done: number;
  total: number;
  appraiserLabel: string;
  /**
   * Operator studies: the appraisers who still have trials and are not the one signed in at the station
   * (the hand-over: "next, sign in as …"). Empty for station studies.
   */
  waitingFor: string[];
}

/** Operators who may be appraisers of a study (active operator accounts), by name. */
export async function operatorChoices(db: DbOrTx): Promise<{ id: string; name: string }[]> {
  return (await listUsers(db))
    .filter((u) => u.role === 'operator' && !u.disabled)
    .map((u) => ({ id: u.id, name: u.displayName }))
    .sort((a, b) => a.name.localeCompare(b.name));
}

/** The next step of the run order for the appraiser at a station, in every open study it takes part in. */
export async function nextStepsAt(db: DbOrTx, stationId: string): Promise<StudyNextStep[]> {
  const open = await db
    .select()
    .from(gaugeStudies)
    .where(eq(gaugeStudies.status, 'open'))
    .orderBy(asc(gaugeStudies.createdAt));
  const out: StudyNextStep[] = [];
  for (const study of open) {
    const appraiser = await appraiserAt(db, study, stationId);
    // An operator study at this station shows even when nobody (or someone else) is signed in: it says
    // whom the station is waiting for.
    const operatorStudyHere = study.appraiserKind === 'operator' && study.stationId === stationId;
    if (appraiser < 0 && !operatorStudyHere) continue;
    const { latest } = await latestReadings(db, study.id);
    const has = (s: GaugeRunStep) => latest.has(`${s.part}:${s.appraiser}:${s.trial}`);
    const pending = (a: number) => study.runOrder.some((s) => s.appraiser === a && !has(s));
    const names =
      study.appraiserKind === 'station'
        ? await stationNamesByIds(db, [stationId])
        : await displayNamesByIds(db, study.appraiserIds);
    const waitingFor =
      study.appraiserKind === 'operator'
        ? study.appraiserIds
            .map((id, a) => ({ id, a }))
            .filter(({ a }) => a !== appraiser && pending(a))
            .map(({ id }) => names.get(id) ?? '?')
        : [];
    const mine = appraiser < 0 ? [] : study.runOrder.filter((s) => s.appraiser === appraiser);
    const next = mine.find((s) => !has(s)) ?? null;
    const serials = await serialsOf(db, study);
    const label =
      appraiser < 0
        ? "the operator signed in here (not one of this study's appraisers)"
        : study.appraiserKind === 'station'
          ? (names.get(stationId) ?? '?')
          : (names.get(study.appraiserIds[appraiser]) ?? '?');
    out.push({
      studyId: study.id,
      studyName: study.name,
      serial: next ? serials[next.part] : null,
      part: next ? next.part + 1 : null,
      trial: next?.trial ?? null,
      trials: study.trials,
      doneByAppraiser: mine.filter(has).length,
      totalByAppraiser: mine.length,
      done: latest.size,
      total: study.runOrder.length,
      appraiserLabel: label,
      waitingFor,
    });
  }
  return out;
}

export async function serialsOf(db: DbOrTx, study: GaugeStudyRecord): Promise<string[]> {
  const map = await serialsByIds(db, study.partUnitIds);
  return study.partUnitIds.map((id) => map.get(id) ?? '?');
}

/**
 * A study trial posted by a station with the ordinary measurement contract. Computed at once with the
 * model's active recipe and stored with the study only: the unit measured is never changed, counted or
 * given a traveler. The trial is the next one due for this part and appraiser; measuring a trial again
 * (a spoiled one) needs the trial number and a reason. The study finishes with its last trial.
 */
export async function acceptStudyReading(
  db: Db,
  clock: () => Date,
  station: StationPrincipal,
  studyId: string,
  body: { measurement: Measurement; repeatReason?: string; trial?: number },
) {
  const { measurement } = body;
  const study = await studyRow(db, studyId);
  const [existing] = await db
    .select()
    .from(gaugeStudyMeasurements)
    .where(eq(gaugeStudyMeasurements.measurementId, measurement.measurementId));
  if (existing) {
    if (existing.studyId !== studyId || existing.stationId !== station.stationId)
      throw qualificationErrors.idConflict(measurement.measurementId);
    return { reading: readingView(existing), repeated: true, finished: study.status === 'finished' };
  }
  if (study.status !== 'open') throw studyErrors.finished();
  const appraiser = await appraiserAt(db, study, station.stationId);
  if (appraiser < 0) throw studyErrors.notAppraiser(station.stationName);
  const unit = await findUnitBySerial(db, measurement.serial);
  const part = unit ? study.partUnitIds.indexOf(unit.id) : -1;
  if (!unit || part < 0) throw studyErrors.notPart(measurement.serial);
  const { latest } = await latestReadings(db, study.id);
  const doneTrials = new Set(
    Array.from({ length: study.trials }, (_, i) => i + 1).filter((t) =>
      latest.has(`${part}:${appraiser}:${t}`),
    ),
  );
  let trial: number;
  if (body.trial !== undefined) {
    if (body.trial > study.trials) throw studyErrors.badDesign(`This study has ${study.trials} trials.`);
    trial = body.trial;
    if (doneTrials.has(trial) && !body.repeatReason) throw studyErrors.trialDone(unit.serial, trial);
  } else {
    const free = Array.from({ length: study.trials }, (_, i) => i + 1).find((t) => !doneTrials.has(t));
    if (free === undefined) throw studyErrors.allTrialsDone(unit.serial);
    trial = free;
  }
  const { offsetDeg, stored } = await computeReading(db, study.modelId, measurement, unit.serial);
  const stationRow = await findStation(db, station.stationId);
  const now = clock();
  return db.transaction(async (tx) => {
    const [row] = await tx
      .insert(gaugeStudyMeasurements)
      .values({
        studyId,
        measurementId: measurement.measurementId,
        stationId: station.stationId,
        operatorId: stationRow?.attendedBy ?? null,
        part,
        appraiser,
        trial,
        serial: unit.serial,
        payload: measurement,
        offsetDeg,
        result: stored as object,
        repeatReason: doneTrials.has(trial) ? (body.repeatReason ?? null) : null,
        measuredAt: now,
      })
      .returning();
    const complete =
      new Set([...latest.keys(), `${part}:${appraiser}:${trial}`]).size === study.runOrder.length;
    if (complete) {
      await tx
        .update(gaugeStudies)
        .set({ status: 'finished', finishedAt: now })
        .where(eq(gaugeStudies.id, studyId));
    }
    if (row.repeatReason) {
      await insertAudit(tx, {
        action: 'gauge_studies.trial_repeated',
        subjectType: 'gauge_study',
        subjectId: studyId,
        reason: row.repeatReason,
        after: { serial: unit.serial, appraiser, trial, stationId: station.stationId },
      });
    }
    return { reading: readingView(row), repeated: false, finished: complete };
  });
}

export function readingView(r: typeof gaugeStudyMeasurements.$inferSelect) {
  return {
    id: r.id,
    measurementId: r.measurementId,
    part: r.part + 1,
    appraiser: r.appraiser + 1,
    trial: r.trial,
    serial: r.serial,
    offsetDeg: r.offsetDeg,
    repeatReason: r.repeatReason,
    measuredAt: r.measuredAt.toISOString(),
  };
}
