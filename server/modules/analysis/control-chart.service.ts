import type { DbOrTx } from '#server/db/client';
import { ANALYSIS_FIGURES, type ControlChartQuery, type ControlChartView } from '#shared/schemas/analysis';
import {
  allRules,
  consecutiveSubgroups,
  evaluateRules,
  ewmaChart,
  individualsChart,
  RULE_TEXT,
  subgroupChart,
  variableSubgroupChart,
  type Baseline,
  type ChartLine,
  type RuleHit,
} from '#shared/statistics';
import { newestFigures, type ChartRow } from '../read-models/calibration-aggregates.repository';
import { analysisErrors } from './analysis.errors';
import type { ControlLimitSetRecord } from './analysis.table';
import { baselineFromWindow, frozenBaseline, limitSetView, limitsInForce } from './control-limits.service';
import { periodKeyer } from '#shared/time/plant-time';
import { modelRecipe, type PlantTime } from './analysis.service';

// The control chart of a filter: its points, limits (frozen or computed), subgroups by size or by plant period, and
// the run rules' hits.

interface Plotted {
  serial: string;
  unitIds: string[];
  computedAt: string;
  period?: string;
}

type Point = ControlChartView['location']['points'][number];

/** The rules of a point without hits: one frozen list shared by every such point (most of a chart's points). */
const NO_RULES: number[] = Object.freeze([]) as unknown as number[];

/**
 * The points of a line. The location line's points are its plotted records themselves, completed in place
 * (`own`); a second line over the same units (the spread) gets points of its own. Thousands of points, few with
 * hits: a 10,000-point chart made most of its garbage here before.
 */
function pointsOf(line: ChartLine, plotted: Plotted[], hits: readonly RuleHit[], own = false): Point[] {
  const rulesAt = new Map<number, number[]>();
  for (const h of hits) rulesAt.set(h.index, [...(rulesAt.get(h.index) ?? []), h.rule]);
  const points = new Array<Point>(line.values.length);
  for (let i = 0; i < points.length; i++) {
    const p = plotted[i];
    const at = rulesAt.get(i);
    const rules = at ? [...new Set(at)].sort((a, b) => a - b) : NO_RULES;
    if (own) {
      const point = p as Point;
      point.value = line.values[i];
      point.rules = rules;
      points[i] = point;
    } else {
      const point: Point = {
        serial: p.serial,
        unitIds: p.unitIds,
        computedAt: p.computedAt,
        value: line.values[i],
        rules,
      };
      if (p.period !== undefined) point.period = p.period;
      points[i] = point;
    }
  }
  return points;
}

/** Rule 1 on a spread chart (or an EWMA): a point outside its limits, whatever their symmetry. */
function outsideLimits(line: ChartLine): RuleHit[] {
  const hits: RuleHit[] = [];
  line.values.forEach((v, i) => {
    if (v > line.ucl[i] || v < line.lcl[i]) hits.push({ rule: 1, index: i, involved: [i] });
  });
  return hits;
}

function plottedOf(rows: ChartRow[], size: number): Plotted[] {
  if (size === 1)
    return rows.map((r) => ({
      serial: r.serial,
      unitIds: [r.unitId],
      computedAt: r.computedAt,
    }));
  return consecutiveSubgroups(rows, size).map((g) => ({
    serial: g[g.length - 1].serial,
    unitIds: g.map((r) => r.unitId),
    computedAt: g[g.length - 1].computedAt,
  }));
}

/**
 * Subgroups by hour or by shift: the first `size` units of each period in production order (a rational
 * subgroup sampled per period); periods with a single unit are left out (no spread within).
 */
function periodSubgroups(rows: ChartRow[], size: number, by: 'hour' | 'shift', time: PlantTime) {
  const keyOf = periodKeyer(by, time.timeZone, time.shifts);
  const groups: { period: string; rows: ChartRow[] }[] = [];
  let current: { period: string; rows: ChartRow[] } | null = null;
  for (const r of rows) {
    const period = keyOf(new Date(r.computedAt));
    if (!current || current.period !== period) {
      current = { period, rows: [] };
      groups.push(current);
    }
    if (current.rows.length < size) current.rows.push(r);
  }
  return groups.filter((g) => g.rows.length >= 2);
}

const UTC_NO_SHIFTS: PlantTime = { timeZone: 'UTC', shifts: [] };

export async function controlChartView(
  db: DbOrTx,
  q: ControlChartQuery,
  time: PlantTime = UTC_NO_SHIFTS,
): Promise<ControlChartView> {
  await modelRecipe(db, q.model);
  const size = q.chart === 'xbar-r' || q.chart === 'xbar-s' ? q.subgroupSize : 1;
  const byPeriod = size > 1 && q.subgroupBy !== 'count' ? (q.subgroupBy as 'hour' | 'shift') : null;
  const { rows, total } = await newestFigures(db, q, { limit: q.limit });
  const periods = byPeriod ? periodSubgroups(rows, size, byPeriod, time) : null;
  const needed = size === 1 ? 2 : 2 * size;
  if (periods ? periods.length < 2 : rows.length < needed)
    throw periods
      ? analysisErrors.tooFewPeriods(periods.length, byPeriod!)
      : analysisErrors.tooFewForChart(rows.length, needed);

  // A window being tried out wins; otherwise the frozen limits in force for this scope (one station's own,
  // else the model's), unless the engineer asked for limits from the points shown.
  let frozen: Baseline | undefined;
  let saved: ControlLimitSetRecord | null = null;
  if (q.baselineFrom && q.baselineTo) {
    frozen = (
      await baselineFromWindow(
        db,
        q,
        q.chart === 'ewma' ? 'imr' : q.chart,
        size,
        new Date(q.baselineFrom),
        new Date(q.baselineTo),
      )
    ).baseline;
  } else if (q.limits === 'saved') {
    saved = await limitsInForce(db, {
      modelId: q.model,
      stationId: q.stations?.length === 1 ? q.stations[0] : null,
      figure: q.figure,
    });
    frozen = frozenBaseline(saved) ?? undefined;
  }

  const values = rows.map((r) => r.value);
  const plotted: Plotted[] = periods
    ? periods.map((g) => ({
        serial: g.rows[g.rows.length - 1].serial,
        unitIds: g.rows.map((r) => r.unitId),
        computedAt: g.rows[g.rows.length - 1].computedAt,
        period: g.period,
      }))
    : plottedOf(rows, size);
  const ruleSet = q.ruleSet;
  const rules = q.rules ?? allRules(ruleSet);
  const unit = ANALYSIS_FIGURES[q.figure].unit;
  const figureLabel = ANALYSIS_FIGURES[q.figure].label;

  let baseline: Baseline;
  let location: ControlChartView['location'];
  let spread: ControlChartView['spread'] = null;
  let locationHits: RuleHit[];
  let spreadHits: RuleHit[] = [];

  if (q.chart === 'ewma') {
    const c = ewmaChart(values, { lambda: q.lambda, L: q.L }, frozen)!;
    baseline = c.baseline;
    // Only points outside the EWMA limits are signals: the EWMA statistic is autocorrelated, so zone and
    // run rules do not apply to it.
    locationHits = outsideLimits(c.line);
    location = {
      title: `EWMA of ${figureLabel} (λ ${q.lambda}, L ${q.L})`,
      points: pointsOf(c.line, plotted, locationHits, true),
      center: c.line.center,
      ucl: c.line.ucl,
      lcl: c.line.lcl,
    };
  } else {
    const c =
      size === 1
        ? individualsChart(values, frozen)!
        : periods
          ? variableSubgroupChart(
              periods.map((g) => g.rows.map((r) => r.value)),
              q.chart as 'xbar-r' | 'xbar-s',
              frozen,
            )!
          : subgroupChart(consecutiveSubgroups(values, size), q.chart as 'xbar-r' | 'xbar-s', frozen)!;
    baseline = c.baseline;
    const loc = c.location;
    locationHits = evaluateRules(
      loc.values.map((v, i) => ({
        index: i,
        value: v,
        z: loc.sigma[i] > 0 ? (v - loc.center[i]) / loc.sigma[i] : 0,
      })),
      ruleSet,
      rules,
    );
    spreadHits = outsideLimits(c.spread);
    location = {
      title:
        size === 1
          ? `Individuals: ${figureLabel}`
          : periods
            ? `Subgroup means (up to ${size} units per ${byPeriod}, plant time): ${figureLabel}`
            : `Subgroup means (${size} units): ${figureLabel}`,
      points: pointsOf(loc, plotted, locationHits, true),
      center: loc.center,
      ucl: loc.ucl,
      lcl: loc.lcl,
    };
    // The moving range starts at the second unit.
    const spreadPlotted = size === 1 ? plotted.slice(1) : plotted;
    spread = {
      title:
        size === 1
          ? 'Moving range'
          : q.chart === 'xbar-r'
            ? 'Subgroup ranges'
            : 'Subgroup standard deviations',
      points: pointsOf(c.spread, spreadPlotted, spreadHits),
      center: c.spread.center,
      ucl: c.spread.ucl,
      lcl: c.spread.lcl,
    };
  }

  const text = RULE_TEXT[ruleSet];
  const violations: ControlChartView['violations'] = [
    ...locationHits.map((h) => ({
      rule: h.rule,
      text: q.chart === 'ewma' ? 'Point outside the EWMA limits' : text[h.rule - 1],
      at: location.points[h.index],
      serials: h.involved.map((i) => location.points[i].serial),
    })),
    ...spreadHits.map((h) => ({
      rule: h.rule,
      text: `${spread!.title}: point outside the control limits`,
      at: spread!.points[h.index],
      serials: [spread!.points[h.index].serial],
    })),
  ];

  return {
    chart: q.chart,
    figure: q.figure,
    unit,
    ruleSet,
    rules: q.chart === 'ewma' ? [1] : rules,
    baseline: {
      center: baseline.center,
      sigma: baseline.sigma,
      source: saved ? 'saved' : frozen ? 'window' : 'shown',
      from: saved ? (saved.baselineFrom?.toISOString() ?? null) : (q.baselineFrom ?? null),
      to: saved ? (saved.baselineTo?.toISOString() ?? null) : (q.baselineTo ?? null),
      saved: saved ? limitSetView(saved) : null,
    },
    location,
    spread,
    violations,
    omitted: total - rows.length,
  };
}
