import { and, asc, desc, eq } from 'drizzle-orm';
import type { Db, DbOrTx } from '../../db/client';
import type { SessionUser, StationPrincipal } from '../../lib/auth';
import { AppError } from '../../lib/errors';
import { insertAudit } from '../audit/audit.repository';
import { findModelWithActiveRecipe } from '../recipes/recipes.repository';
import { findStation, stationNamesByIds } from '../stations/stations.service';
import { findUnitBySerial } from '../units/units.service';
import { displayNamesByIds, findUserById } from '../users/users.repository';
import { runEngine } from '../measurements/measurements.service';
import { measurementErrors } from '../measurements/measurements.errors';
import { validateCalibrationInput } from '../../../shared/calibration';
import { createRng } from '../../../shared/simulation/rng';
import {
  gaugeAnova,
  gaugeAverageRange,
  readGauge,
  type GaugeAnovaResult,
  type GaugeRangeResult,
} from '../../../shared/statistics/gauge-study';
import { measurementSchema } from '../../../shared/schemas/measurement';
import type { GaugeStudyCreate } from '../../../shared/schemas/qualification';
import {
  gaugeStudies,
  gaugeStudyMeasurements,
  type GaugeRunStep,
  type GaugeStudyRecord,
} from './qualification.table';

export const studyErrors = {
  notFound: () => new AppError(404, 'gauge_studies.not_found', 'There is no such gauge study.'),
  finished: () => new AppError(409, 'gauge_studies.finished', 'This gauge study is finished: it takes no more readings.'),
  notAppraiser: (station: string) =>
    new AppError(
      409,
      'gauge_studies.not_appraiser',
      `Station ${station} (or the operator signed in at it) is not an appraiser of this study.`,
    ),
  notPart: (serial: string) =>
    new AppError(422, 'gauge_studies.not_part', `Unit ${serial} is not one of this study's parts.`),
  trialDone: (serial: string, trial: number) =>
    new AppError(
      409,
      'gauge_studies.trial_done',
      `Trial ${trial} of part ${serial} is already measured. To measure it again (a spoiled trial), give the trial and a reason.`,
    ),
  allTrialsDone: (serial: string) =>
    new AppError(
      409,
      'gauge_studies.all_trials_done',
      `Every trial of part ${serial} is measured. To repeat a spoiled one, give the trial and a reason.`,
    ),
  badDesign: (message: string) => new AppError(422, 'gauge_studies.bad_design', message),
};

/**
 * The run order: each trial is a round in which every appraiser measures every part once, in an order
 * shuffled afresh for each appraiser and trial (so an appraiser cannot remember the last reading of a part).
 */
export function planRunOrder(parts: number, appraisers: number, trials: number, seed: number): GaugeRunStep[] {
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
  const stationIds = input.appraiserKind === 'station' ? input.appraiserIds : input.stationId ? [input.stationId] : [];
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
      if (!u || u.disabled) throw studyErrors.badDesign('One of the operators does not exist or is switched off.');
    }
  }
  const partUnitIds: string[] = [];
  for (const serial of input.partSerials) {
    const unit = await findUnitBySerial(db, serial);
    if (!unit) throw studyErrors.badDesign(`Unit ${serial} is not registered.`);
    if (unit.modelId !== input.modelId) throw studyErrors.badDesign(`Unit ${serial} is not a ${found.model.code}.`);
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
        appraiserIds: input.appraiserKind === 'operator' ? [...input.appraiserIds, `station:${stationIds[0]}`].slice(0, -1) : input.appraiserIds,
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
      after: { name: input.name, parts: partUnitIds.length, appraisers: input.appraiserIds.length, trials: input.trials },
    });
    if (input.appraiserKind === 'operator') studyStations.set(row.id, stationIds[0]);
    return row;
  });
}

/** The station of an operator study (kept in the run order's audit trail is not enough: stored with the study). */
const studyStations = new Map<string, string>();

async function studyRow(db: DbOrTx, id: string): Promise<GaugeStudyRecord> {
  const [row] = await db.select().from(gaugeStudies).where(eq(gaugeStudies.id, id));
  if (!row) throw studyErrors.notFound();
  return row;
}

/** The latest reading of each (part, appraiser, trial): a repeated spoiled trial replaces the earlier one. */
async function latestReadings(db: DbOrTx, studyId: string) {
  const rows = await db
    .select()
    .from(gaugeStudyMeasurements)
    .where(eq(gaugeStudyMeasurements.studyId, studyId))
    .orderBy(asc(gaugeStudyMeasurements.measuredAt), asc(gaugeStudyMeasurements.id));
  const latest = new Map<string, (typeof rows)[number]>();
  for (const r of rows) latest.set(`${r.part}:${r.appraiser}:${r.trial}`, r);
  return { all: rows, latest };
}

export interface StudyStep extends GaugeRunStep {
  serial: string;
  index: number;
  total: number;
}
