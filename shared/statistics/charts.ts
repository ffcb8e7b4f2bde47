// Control-chart limits. Every chart is given in production order and returns, per plotted point, the value,
// the centre line and the control limits, plus σ of the plotted statistic so that run rules can use zones.
// Limits are either computed from the data shown or frozen from a baseline (centre and σ within).
import { chartConstants } from './constants';
import { mean, sampleSd } from './descriptive';

export interface Baseline {
  /** Process centre, in the unit of the values. */
  center: number;
  /** Within-subgroup (short-term) σ of individual values. */
  sigma: number;
}

export interface ChartLine {
  values: number[];
  center: number[];
  ucl: number[];
  lcl: number[];
  /** σ of the plotted statistic at each point (for zone rules). */
  sigma: number[];
}

export interface ShewhartChart {
  kind: 'imr' | 'xbar-r' | 'xbar-s';
  subgroupSize: number;
  /** Estimated or frozen centre and σ within of individual values. */
  baseline: Baseline;
  location: ChartLine;
  spread: ChartLine;
}

function constantLine(values: number[], center: number, ucl: number, lcl: number, sigma: number): ChartLine {
  const n = values.length;
  return {
    values,
    center: new Array<number>(n).fill(center),
    ucl: new Array<number>(n).fill(ucl),
    lcl: new Array<number>(n).fill(lcl),
    sigma: new Array<number>(n).fill(sigma),
  };
}

/** Consecutive subgroups of `size` values; an incomplete last subgroup is dropped. */
export function consecutiveSubgroups<T>(values: readonly T[], size: number): T[][] {
  const out: T[][] = [];
  for (let i = 0; i + size <= values.length; i += size) out.push(values.slice(i, i + size));
  return out;
}

/**
 * Individuals and moving range (span 2). Computed: centre x̄, σ = MR̄/d2; X limits x̄ ± 3σ; MR limits D3·MR̄,
 * D4·MR̄. The moving-range line has one value fewer than the individuals (it starts at the second point).
 */
export function individualsChart(values: readonly number[], frozen?: Baseline): ShewhartChart | null {
  if (values.length < 2) return null;
  const k = chartConstants(2);
  const mr: number[] = [];
  for (let i = 1; i < values.length; i++) mr.push(Math.abs(values[i] - values[i - 1]));
  const baseline = frozen ?? { center: mean(values), sigma: mean(mr) / k.d2 };
  const mrBar = baseline.sigma * k.d2;
  return {
    kind: 'imr',
    subgroupSize: 1,
    baseline,
    location: constantLine(
      [...values],
      baseline.center,
      baseline.center + 3 * baseline.sigma,
      baseline.center - 3 * baseline.sigma,
      baseline.sigma,
    ),
    spread: constantLine(mr, mrBar, k.D4 * mrBar, k.D3 * mrBar, k.d3 * baseline.sigma),
  };
}

/** X̄-R (kind 'xbar-r') or X̄-S (kind 'xbar-s') of consecutive subgroups of equal size. */
export function subgroupChart(
  subgroups: readonly (readonly number[])[],
  kind: 'xbar-r' | 'xbar-s',
  frozen?: Baseline,
): ShewhartChart | null {
  if (subgroups.length < 2) return null;
  const n = subgroups[0].length;
  const k = chartConstants(n);
  const means = subgroups.map((g) => mean(g));
  const spreads = subgroups.map((g) => (kind === 'xbar-r' ? Math.max(...g) - Math.min(...g) : sampleSd(g)));
  const spreadBar = mean(spreads);
  const baseline = frozen ?? {
    center: mean(means),
    sigma: kind === 'xbar-r' ? spreadBar / k.d2 : spreadBar / k.c4,
  };
  const sigmaMean = baseline.sigma / Math.sqrt(n);
  const location = constantLine(
    means,
    baseline.center,
    baseline.center + 3 * sigmaMean,
    baseline.center - 3 * sigmaMean,
    sigmaMean,
  );
  // With computed limits these equal x̿ ± A2·R̄ (A3·s̄) and D3/D4·R̄ (B3/B4·s̄); with a frozen σ they are the
  // σ-known forms of the same limits.
  const spread =
    kind === 'xbar-r'
      ? constantLine(
          spreads,
          k.d2 * baseline.sigma,
          k.D4 * k.d2 * baseline.sigma,
          k.D3 * k.d2 * baseline.sigma,
          k.d3 * baseline.sigma,
        )
      : constantLine(
          spreads,
          k.c4 * baseline.sigma,
          k.B4 * k.c4 * baseline.sigma,
          k.B3 * k.c4 * baseline.sigma,
          Math.sqrt(1 - k.c4 * k.c4) * baseline.sigma,
        );
  return { kind, subgroupSize: n, baseline, location, spread };
}

export interface EwmaOptions {
  /** Weight of the newest value, 0 < λ ≤ 1. */
  lambda: number;
  /** Width of the limits in σ of the EWMA statistic. */
  L: number;
  /** Use the steady-state limits for every point instead of the exact, narrower early limits. */
  asymptotic?: boolean;
}

export interface EwmaState {
  /** Number of values absorbed so far. */
  count: number;
  /** Current EWMA statistic. */
  z: number;
}

export interface EwmaChart {
  kind: 'ewma';
  baseline: Baseline;
  lambda: number;
  L: number;
  line: ChartLine;
  state: EwmaState;
}

/** σ of the EWMA statistic after i values: σ·√(λ/(2−λ)·(1 − (1−λ)^{2i})). */
export function ewmaSigma(sigma: number, lambda: number, i: number, asymptotic = false): number {
  const f = asymptotic ? 1 : 1 - Math.pow(1 - lambda, 2 * i);
  return sigma * Math.sqrt((lambda / (2 - lambda)) * f);
}

/**
 * Each value enters the EWMA clipped to centre ± EWMA_CLIP_SIGMA·σ, the individuals chart's own limits. The
 * EWMA is there for small, lasting shifts; a single gross value (a unit with a rotated magnet ring, 20° off)
 * would otherwise move it past its limits on its own and hold it there for dozens of units: an alarm about one
 * unit, which the individuals chart already raises as a point beyond its limits. Pairing the two charts this
 * way, each for the shifts it is good at, with a limit on each value's influence on the EWMA, is common
 * practice for robust EWMA charts (from memory, no single source). Ordinary values are untouched: beyond 3σ lie
 * about 3 in 1,000.
 */
export const EWMA_CLIP_SIGMA = 3;

export function clipForEwma(x: number, baseline: Baseline): number {
  const w = EWMA_CLIP_SIGMA * baseline.sigma;
  return Math.min(baseline.center + w, Math.max(baseline.center - w, x));
}

/** Absorbs one value; returns the new state (pure). */
export function ewmaStep(state: EwmaState, x: number, lambda: number): EwmaState {
  return { count: state.count + 1, z: lambda * x + (1 - lambda) * state.z };
}

/**
 * EWMA chart, z₀ = centre. The baseline (target and σ) is frozen or, when absent, estimated from the data: the
 * mean and MR̄/d2.
 */
export function ewmaChart(
  values: readonly number[],
  options: EwmaOptions,
  frozen?: Baseline,
): EwmaChart | null {
  const { lambda, L } = options;
  if (!(lambda > 0 && lambda <= 1) || !(L > 0)) throw new RangeError('λ must be in (0, 1] and L above 0.');
  if (values.length < 2) return null;
  const baseline = frozen ?? individualsChart(values)!.baseline;
  let state: EwmaState = { count: 0, z: baseline.center };
  const line: ChartLine = { values: [], center: [], ucl: [], lcl: [], sigma: [] };
  for (const x of values) {
    state = ewmaStep(state, clipForEwma(x, baseline), lambda);
    const s = ewmaSigma(baseline.sigma, lambda, state.count, options.asymptotic);
    line.values.push(state.z);
    line.center.push(baseline.center);
    line.ucl.push(baseline.center + L * s);
    line.lcl.push(baseline.center - L * s);
    line.sigma.push(s);
  }
  return { kind: 'ewma', baseline, lambda, L, line, state };
}

/**
 * X̄-R or X̄-S of subgroups of unequal size (units sampled per hour or per shift; each has 2…25 units). Each
 * point has the limits of its own n: centre ± 3σ/√n, and d2(n)σ, D3/D4·d2(n)σ (c4(n)σ, B3/B4·c4(n)σ) for the
 * spread. Computed σ within is the average of each subgroup's unbiased estimate, R/d2(n) or s/c4(n), and the
 * centre is the mean of every value (Montgomery, Introduction to SPC, §6.3.1, variable sample size, with the
 * simple average of the per-subgroup σ estimates). With equal sizes it equals `subgroupChart`.
 */
export function variableSubgroupChart(
  subgroups: readonly (readonly number[])[],
  kind: 'xbar-r' | 'xbar-s',
  frozen?: Baseline,
): ShewhartChart | null {
  if (subgroups.length < 2) return null;
  const ks = subgroups.map((g) => chartConstants(g.length));
  const means = subgroups.map((g) => mean(g));
  const spreads = subgroups.map((g) => (kind === 'xbar-r' ? Math.max(...g) - Math.min(...g) : sampleSd(g)));
  const total = subgroups.reduce((a, g) => a + g.length, 0);
  const baseline = frozen ?? {
    center: subgroups.reduce((a, g) => a + g.reduce((b, x) => b + x, 0), 0) / total,
    sigma: mean(spreads.map((s, i) => (kind === 'xbar-r' ? s / ks[i].d2 : s / ks[i].c4))),
  };
  const { center, sigma } = baseline;
  const sm = subgroups.map((g) => sigma / Math.sqrt(g.length));
  const location: ChartLine = {
    values: means,
    center: means.map(() => center),
    ucl: sm.map((s) => center + 3 * s),
    lcl: sm.map((s) => center - 3 * s),
    sigma: sm,
  };
  const spreadCenter = ks.map((k) => (kind === 'xbar-r' ? k.d2 : k.c4) * sigma);
  const spread: ChartLine = {
    values: spreads,
    center: spreadCenter,
    ucl: ks.map((k, i) => (kind === 'xbar-r' ? k.D4 : k.B4) * spreadCenter[i]),
    lcl: ks.map((k, i) => (kind === 'xbar-r' ? k.D3 : k.B3) * spreadCenter[i]),
    sigma: ks.map((k) => (kind === 'xbar-r' ? k.d3 : Math.sqrt(1 - k.c4 * k.c4)) * sigma),
  };
  return { kind, subgroupSize: Math.max(...subgroups.map((g) => g.length)), baseline, location, spread };
}
