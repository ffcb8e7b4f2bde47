import type { DbOrTx } from '#server/db/client';
import {
  ANALYSIS_FIGURES,
  CHECK_NAMES,
  type AnalysisFilter,
  type AnalysisOptions,
  type ComparisonQuery,
  type ComparisonView,
  type DistributionView,
  type LineHealthView,
} from '#shared/schemas/analysis';
import type { Recipe } from '#shared/schemas/recipe';
import {
  andersonDarling,
  chartConstants,
  capabilityFromFigures,
  describeFromSums,
  groupsBeyondThresholdFromMeans,
  kruskalWallisFromRanks,
  summarizeGroupFromFigures,
  readCapability,
  welchAnovaFromSummaries,
} from '#shared/statistics';
import { findModelWithActiveRecipe } from '../recipes/recipes.repository';
import {
  analysisChoices,
  failedCheckCounts,
  placementTrend,
  programmingMismatchesByDay,
  stationDayHealth,
} from '../read-models/calibration-figures.repository';
import {
  comparisonAggregate,
  distributionAggregate,
  groupRankSums,
} from '../read-models/calibration-aggregates.repository';
import { analysisErrors } from './analysis.errors';
import { renderCapabilityReport } from './capability-report';
import { TRAVELER_HEADER } from '../travelers/travelers.service';
import type { SessionUser } from '#server/lib/auth';
import { getShifts } from '../qualification/qualification.service';
import { presetStart, type PlantShift } from '#shared/time/plant-time';

/** The plant's time zone and shifts (the qualification module keeps the shifts). */
export interface PlantTime {
  timeZone: string;
  shifts: PlantShift[];
}

export async function readPlantTime(db: DbOrTx, timeZone: string): Promise<PlantTime> {
  const { shifts } = await getShifts(db);
  return {
    timeZone,
    shifts: shifts.map((s) => {
      const [h, m] = s.startsAt.split(':').map(Number);
      return { name: s.name, startMinute: h * 60 + m };
    }),
  };
}

/**
 * The filter with a time preset turned into its bounds at this moment in the plant's zone ("this shift" from
 * the running shift's start, "today" from local midnight…). Custom and unbounded ranges are left as given.
 */
export function resolveRange<F extends AnalysisFilter>(filter: F, now: Date, time: PlantTime): F {
  if (!filter.range || filter.range === 'custom') return filter;
  if (filter.range === 'all') return { ...filter, from: undefined, to: undefined };
  const start = presetStart(filter.range, now, time.timeZone, time.shifts);
  return { ...filter, from: start?.toISOString(), to: undefined };
}

/** Below this p-value the Anderson–Darling test says the values are not normal. */
const NORMALITY_ALPHA = 0.05;

export async function modelRecipe(db: DbOrTx, modelId: string) {
  const found = await findModelWithActiveRecipe(db, modelId);
  if (!found) throw analysisErrors.unknownModel();
  return found;
}

/** Specification limits of a figure from the recipe, where the recipe has them. */
export function figureLimits(figure: AnalysisFilter['figure'], recipe: Recipe | null) {
  const none = { lsl: null, usl: null, target: null };
  if (!recipe) return none;
  const window = (w: readonly [number, number] | undefined) =>
    w ? { lsl: w[0], usl: w[1], target: (w[0] + w[1]) / 2 } : none;
  switch (figure) {
    case 'offsetDeg':
      return window(recipe.limits.offsetDeg);
    case 'speedRpm':
      return window(recipe.limits.speedRpm);
    case 'keVPerKrpm':
      return window(recipe.limits.keVPerKrpm);
    case 'fitResidualDeg':
      return recipe.limits.fitResidualDeg !== undefined
        ? { lsl: null, usl: recipe.limits.fitResidualDeg, target: null }
        : none;
    default:
      return none;
  }
}

const fmt = (x: number, digits = 3) => x.toFixed(digits);

export async function distributionView(db: DbOrTx, filter: AnalysisFilter): Promise<DistributionView> {
  const { recipe } = await modelRecipe(db, filter.model);
  const limits = figureLimits(filter.figure, recipe?.body ?? null);
  const hasLimits = limits.lsl !== null || limits.usl !== null;
  const agg = await distributionAggregate(db, filter, hasLimits ? limits : null);
  const n = agg.n;
  const description = describeFromSums(agg);
  // The test sees every value up to NORMALITY_SAMPLE; beyond that the newest ones (a normality test on
  // hundreds of thousands of values rejects any real process anyway).
  const ad = andersonDarling(agg.newest);
  const normal = ad ? ad.pValue >= NORMALITY_ALPHA : null;
  // Within σ from the average moving range in production order (MR̄ / d2), as capability() does.
  const sigmaWithin = n >= 2 ? agg.movingRangeSum! / (n - 1) / chartConstants(2).d2 : NaN;
  const sigmaOverall = description.sd ?? NaN;
  const cap =
    hasLimits && n >= 2 && sigmaWithin > 0 && sigmaOverall > 0
      ? capabilityFromFigures({ n, mean: description.mean!, sigmaWithin, sigmaOverall }, limits)
      : null;
  const warnings: string[] = [];
  if (n === 0) warnings.push('No calibration matches the filter.');
  else if (n < 30)
    warnings.push(
      `Only ${n} values: the figures and their intervals are rough; 100 or more is usual for a capability study.`,
    );
  if (ad && !normal)
    warnings.push(
      `The values do not look normally distributed (Anderson–Darling p = ${fmt(ad.pValue, 4)}${ad.n < n ? `, on the newest ${ad.n.toLocaleString('en')} of ${n.toLocaleString('en')} values` : ''}). Cp, Cpk and the expected parts per million assume a normal distribution and may mislead; look at the histogram and at a split by station or lot.`,
    );
  if (!hasLimits && n > 0)
    warnings.push('The recipe sets no limits for this figure, so there are no capability indices.');
  const unit = ANALYSIS_FIGURES[filter.figure].unit;
  const h = agg.histogram;
  return {
    figure: filter.figure,
    unit,
    n,
    description,
    histogram: !h
      ? []
      : h.step === 0
        ? [{ from: h.lo - 0.5, to: h.lo + 0.5, count: n }]
        : h.counts.map((count, i) => ({ from: h.lo + i * h.step, to: h.lo + (i + 1) * h.step, count })),
    limits,
    recipeVersion: recipe?.version ?? null,
    normality: ad
      ? { statistic: ad.statistic, adjusted: ad.adjusted, pValue: ad.pValue, normal: !!normal, n: ad.n }
      : null,
    capability: cap ? { ...cap, reading: cap.cpk ? readCapability(cap.cpk.value) : null } : null,
    warnings,
  };
}

export async function comparisonView(db: DbOrTx, q: ComparisonQuery): Promise<ComparisonView> {
  await modelRecipe(db, q.model);
  const groups = await comparisonAggregate(db, q, q.by);
  const entries = groups
    .map((g) => ({
      ...g,
      key: g.key ?? '',
      label:
        g.key === null ? 'Not recorded' : (g.label ?? (q.by === 'operator' ? 'Unknown operator' : g.key)),
    }))
    .sort((a, b) => a.label.localeCompare(b.label));
  const nonNormal = entries
    .map((g) => ({ label: g.label, ad: andersonDarling(g.newest) }))
    .filter((x) => x.ad && x.ad.pValue < NORMALITY_ALPHA);
  let test: ComparisonView['test'] = null;
  if (nonNormal.length > 0) {
    const { rankSums, ties } = await groupRankSums(db, q, q.by);
    const t = kruskalWallisFromRanks(
      entries.map((g) => ({ n: g.n, rankSum: rankSums.get(g.key) ?? 0 })),
      ties,
    );
    if (t)
      test = {
        ...t,
        reason: `Kruskal–Wallis (ranks), because ${nonNormal.map((x) => x.label).join(', ')} ${nonNormal.length === 1 ? 'does' : 'do'} not look normally distributed.`,
      };
  } else {
    const t = welchAnovaFromSummaries(entries);
    if (t) test = { ...t, reason: "Welch's one-way analysis of variance (no equal-spread assumption)." };
  }
  const labels = new Map(entries.map((g) => [g.key, g.label]));
  return {
    by: q.by,
    figure: q.figure,
    unit: ANALYSIS_FIGURES[q.figure].unit,
    threshold: q.threshold,
    groups: entries.map((g) => ({
      ...summarizeGroupFromFigures(g.key, g, {
        q1: g.q1,
        median: g.median,
        q3: g.q3,
        whiskerLow: g.inLow === null ? g.q1 : Math.min(g.q1, g.inLow),
        whiskerHigh: g.inHigh === null ? g.q3 : Math.max(g.q3, g.inHigh),
        outliers: g.outliers,
      }),
      label: g.label,
    })),
    test,
    standOut: groupsBeyondThresholdFromMeans(entries, q.threshold).map((d) => ({
      ...d,
      label: labels.get(d.key)!,
    })),
  };
}

export async function lineHealthView(db: DbOrTx, filter: AnalysisFilter): Promise<LineHealthView> {
  await modelRecipe(db, filter.model);
  const [days, mismatches, failed, trend] = await Promise.all([
    stationDayHealth(db, filter),
    programmingMismatchesByDay(db, filter),
    failedCheckCounts(db, filter),
    placementTrend(db, filter),
  ]);
  const mm = new Map(mismatches.map((m) => [`${m.day}|${m.stationId}`, m.count]));
  return {
    days: days.map((d) => ({
      day: d.day,
      stationId: d.stationId,
      station: d.station,
      units: d.units,
      firstPassYieldPct: d.firstAttempts > 0 ? (100 * d.firstPasses) / d.firstAttempts : null,
      retestRatePct: d.counted > 0 ? (100 * d.retests) / d.counted : null,
      programmingMismatches: mm.get(`${d.day}|${d.stationId}`) ?? 0,
    })),
    failedChecks: failed.map((f) => ({ ...f, label: CHECK_NAMES[f.code] ?? f.code })),
    placementTrend: trend,
  };
}

export async function analysisOptions(
  db: DbOrTx,
  modelId: string,
  timeZone: string,
): Promise<AnalysisOptions> {
  await modelRecipe(db, modelId);
  const [choices, shifts] = await Promise.all([analysisChoices(db, modelId), getShifts(db)]);
  return { ...choices, timeZone, shifts: shifts.shifts };
}

/** The filter in words for the report (names, not ids). */
async function filterText(db: DbOrTx, f: AnalysisFilter): Promise<string> {
  const parts: string[] = [];
  if (f.stations) {
    const choices = await analysisChoices(db, f.model);
    parts.push(
      `stations ${choices.stations
        .filter((s) => f.stations!.includes(s.id))
        .map((s) => s.name)
        .join(', ')}`,
    );
  }
  if (f.hallBoardLots) parts.push(`hall-board lots ${f.hallBoardLots.join(', ')}`);
  if (f.magnetRingLots) parts.push(`magnet-ring lots ${f.magnetRingLots.join(', ')}`);
  if (f.statorLots) parts.push(`stator lots ${f.statorLots.join(', ')}`);
  if (f.recipeVersions) parts.push(`recipe versions ${f.recipeVersions.join(', ')}`);
  if (f.operators) parts.push(`${f.operators.length} operator(s)`);
  parts.push(f.from ? `from ${f.from}` : 'from the first record');
  parts.push(f.to ? `to ${f.to}` : 'to now');
  parts.push(f.verdict === 'all' ? 'pass and fail' : `${f.verdict} only`);
  parts.push(f.attempts === 'first' ? 'first attempts' : 'all attempts');
  parts.push(f.purpose === 'station' ? 'station results' : 'recomputations');
  return parts.join('; ');
}

export async function capabilityReport(
  db: DbOrTx,
  clock: () => Date,
  user: SessionUser,
  filter: AnalysisFilter,
): Promise<Buffer> {
  const { model } = await modelRecipe(db, filter.model);
  const view = await distributionView(db, filter);
  return renderCapabilityReport({
    view,
    companyName: TRAVELER_HEADER.companyName,
    plantName: TRAVELER_HEADER.plantName,
    model: { code: model.code, name: model.name },
    filterText: await filterText(db, filter),
    generatedAt: clock(),
    generatedBy: user.displayName,
  });
}
