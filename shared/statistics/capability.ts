// Process capability (ISO 22514-2 style indices). Cp/Cpk use the within-subgroup σ, Pp/Ppk the overall
// sample σ. Confidence intervals (two-sided, 95 % by default):
//   Cp, Pp: chi-square, Ĉp·√(χ²_{α/2, n−1}/(n−1)) … Ĉp·√(χ²_{1−α/2, n−1}/(n−1))
//   Cpk, Ppk: Bissell (1990), Ĉpk ± z_{1−α/2}·√(1/(9n) + Ĉpk²/(2(n−1)))
// Expected parts per million outside the limits assume a normal distribution.
import { chiSquareQuantile, normalCdf, normalQuantile } from './distributions';
import { chartConstants } from './constants';
import { mean, sampleSd } from './descriptive';

export interface SpecLimits {
  lsl: number | null;
  usl: number | null;
}

export interface Interval {
  value: number;
  lower: number;
  upper: number;
}

export interface Capability {
  n: number;
  mean: number;
  sigmaWithin: number;
  sigmaOverall: number;
  cp: Interval | null;
  cpk: Interval | null;
  cpu: number | null;
  cpl: number | null;
  pp: Interval | null;
  ppk: Interval | null;
  ppmWithin: number;
  ppmOverall: number;
}

export function cpInterval(cp: number, n: number, confidence = 0.95): Interval {
  const a = 1 - confidence;
  const df = n - 1;
  return {
    value: cp,
    lower: cp * Math.sqrt(chiSquareQuantile(a / 2, df) / df),
    upper: cp * Math.sqrt(chiSquareQuantile(1 - a / 2, df) / df),
  };
}

export function cpkInterval(cpk: number, n: number, confidence = 0.95): Interval {
  const z = normalQuantile(1 - (1 - confidence) / 2);
  const half = z * Math.sqrt(1 / (9 * n) + (cpk * cpk) / (2 * (n - 1)));
  return { value: cpk, lower: cpk - half, upper: cpk + half };
}

function indices(m: number, sigma: number, limits: SpecLimits) {
  const cpu = limits.usl !== null ? (limits.usl - m) / (3 * sigma) : null;
  const cpl = limits.lsl !== null ? (m - limits.lsl) / (3 * sigma) : null;
  const cp = limits.usl !== null && limits.lsl !== null ? (limits.usl - limits.lsl) / (6 * sigma) : null;
  const cpk = cpu === null ? cpl : cpl === null ? cpu : Math.min(cpu, cpl);
  return { cp, cpk, cpu, cpl };
}

function ppm(m: number, sigma: number, limits: SpecLimits): number {
  const below = limits.lsl !== null ? normalCdf((limits.lsl - m) / sigma) : 0;
  const above = limits.usl !== null ? 1 - normalCdf((limits.usl - m) / sigma) : 0;
  return (below + above) * 1e6;
}

/** Capability from the figures themselves (mean, within σ, overall σ, n). */
export function capabilityFromFigures(
  figures: { n: number; mean: number; sigmaWithin: number; sigmaOverall: number },
  limits: SpecLimits,
  confidence = 0.95,
): Capability {
  const { n, sigmaWithin, sigmaOverall } = figures;
  const m = figures.mean;
  const within = indices(m, sigmaWithin, limits);
  const overall = indices(m, sigmaOverall, limits);
  const ok = n >= 2;
  return {
    n,
    mean: m,
    sigmaWithin,
    sigmaOverall,
    cp: within.cp !== null && ok ? cpInterval(within.cp, n, confidence) : null,
    cpk: within.cpk !== null && ok ? cpkInterval(within.cpk, n, confidence) : null,
    cpu: within.cpu,
    cpl: within.cpl,
    pp: overall.cp !== null && ok ? cpInterval(overall.cp, n, confidence) : null,
    ppk: overall.cpk !== null && ok ? cpkInterval(overall.cpk, n, confidence) : null,
    ppmWithin: ppm(m, sigmaWithin, limits),
    ppmOverall: ppm(m, sigmaOverall, limits),
  };
}

/** σ within from the average moving range of consecutive values: MR̄ / d2(2). */
export function sigmaFromMovingRange(values: readonly number[]): number {
  let sum = 0;
  for (let i = 1; i < values.length; i++) sum += Math.abs(values[i] - values[i - 1]);
  return sum / (values.length - 1) / chartConstants(2).d2;
}

/** σ within from equal-size subgroups: R̄ / d2(n) or s̄ / c4(n). */
export function sigmaFromSubgroups(
  subgroups: readonly (readonly number[])[],
  method: 'range' | 'stdev',
): number {
  const k = chartConstants(subgroups[0].length);
  let sum = 0;
  for (const g of subgroups) sum += method === 'range' ? Math.max(...g) - Math.min(...g) : sampleSd(g);
  const bar = sum / subgroups.length;
  return method === 'range' ? bar / k.d2 : bar / k.c4;
}

/**
 * Capability of values in production order. With `subgroupSize` 1 the within σ comes from the moving range;
 * otherwise consecutive subgroups of that size (an incomplete last one is left out of σ within) give R̄/d2
 * (`range`) or s̄/c4 (`stdev`).
 */
export function capability(
  values: readonly number[],
  limits: SpecLimits,
  options: { subgroupSize?: number; method?: 'range' | 'stdev'; confidence?: number } = {},
): Capability | null {
  const size = options.subgroupSize ?? 1;
  if (values.length < Math.max(2, size * 2)) return null;
  const m = mean(values);
  const sigmaOverall = sampleSd(values, m);
  let sigmaWithin: number;
  if (size === 1) sigmaWithin = sigmaFromMovingRange(values);
  else {
    const groups: number[][] = [];
    for (let i = 0; i + size <= values.length; i += size) groups.push(values.slice(i, i + size));
    sigmaWithin = sigmaFromSubgroups(groups, options.method ?? 'range');
  }
  if (!(sigmaWithin > 0) || !(sigmaOverall > 0)) return null;
  return capabilityFromFigures(
    { n: values.length, mean: m, sigmaWithin, sigmaOverall },
    limits,
    options.confidence,
  );
}

export type CapabilityReading = 'capable' | 'conditionally-capable' | 'not-capable';

/**
 * Plain reading of a Cpk/Ppk for an initial study: ≥ 1.67 capable, 1.33–1.67 acceptable with watching,
 * below 1.33 not capable (common practice in the automotive supply chain, no single source).
 */
export function readCapability(index: number): CapabilityReading {
  if (index >= 1.67) return 'capable';
  if (index >= 1.33) return 'conditionally-capable';
  return 'not-capable';
}
