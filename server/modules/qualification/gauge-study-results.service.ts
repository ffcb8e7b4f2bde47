import { desc } from 'drizzle-orm';
import type { DbOrTx } from '#server/db/client';
import { findModelWithActiveRecipe } from '../recipes/recipes.repository';
import { stationNamesByIds } from '../stations/stations.service';
import { displayNamesByIds } from '../users/users.repository';
import {
  gaugeAnova,
  gaugeAverageRange,
  readGauge,
  type GaugeAnovaResult,
  type GaugeRangeResult,
} from '#shared/statistics/gauge-study';
import { gaugeStudies } from './qualification.table';
import { latestReadings, readingView, serialsOf, studyRow } from './gauge-studies.service';

// A gauge study's list and results (ANOVA and average-and-range), read from its readings.

export interface StudyResults {
  anova: GaugeAnovaResult;
  averageRange: GaugeRangeResult;
  reading: ReturnType<typeof readGauge>;
  readingOfTolerance: ReturnType<typeof readGauge> | null;
  /** data[part][appraiser][trial], degrees. */
  data: number[][][];
}

export async function listStudies(db: DbOrTx) {
  const rows = await db.select().from(gaugeStudies).orderBy(desc(gaugeStudies.createdAt));
  return rows.map((r) => ({
    id: r.id,
    name: r.name,
    modelId: r.modelId,
    appraiserKind: r.appraiserKind,
    parts: r.partUnitIds.length,
    appraisers: r.appraiserIds.length,
    trials: r.trials,
    toleranceDeg: r.toleranceDeg,
    status: r.status,
    createdAt: r.createdAt.toISOString(),
    finishedAt: r.finishedAt?.toISOString() ?? null,
  }));
}

/** A study with its design, its readings and, once every trial is in, its results by both methods. */
export async function studyDetail(db: DbOrTx, id: string) {
  const study = await studyRow(db, id);
  const { all, latest } = await latestReadings(db, id);
  const serials = await serialsOf(db, study);
  const names =
    study.appraiserKind === 'station'
      ? await stationNamesByIds(db, study.appraiserIds)
      : await displayNamesByIds(db, study.appraiserIds);
  const found = await findModelWithActiveRecipe(db, study.modelId);
  let results: StudyResults | null = null;
  if (latest.size === study.runOrder.length) {
    const data = study.partUnitIds.map((_, p) =>
      study.appraiserIds.map((_a, a) =>
        Array.from({ length: study.trials }, (_t, t) => latest.get(`${p}:${a}:${t + 1}`)!.offsetDeg),
      ),
    );
    const anova = gaugeAnova(data, { tolerance: study.toleranceDeg });
    const averageRange = gaugeAverageRange(data, { tolerance: study.toleranceDeg });
    results = {
      anova,
      averageRange,
      reading: readGauge(anova.percentOfTv.grr, anova.ndc),
      readingOfTolerance: anova.percentOfTolerance
        ? readGauge(anova.percentOfTolerance.grr, anova.ndc)
        : null,
      data,
    };
  }
  return {
    id: study.id,
    name: study.name,
    modelId: study.modelId,
    modelCode: found?.model.code ?? '?',
    appraiserKind: study.appraiserKind,
    appraisers: study.appraiserIds.map((aid) => ({ id: aid, name: names.get(aid) ?? '?' })),
    stationId: study.stationId,
    parts: serials,
    trials: study.trials,
    toleranceDeg: study.toleranceDeg,
    status: study.status,
    createdAt: study.createdAt.toISOString(),
    finishedAt: study.finishedAt?.toISOString() ?? null,
    done: latest.size,
    total: study.runOrder.length,
    readings: all.map(readingView),
    results,
  };
}
