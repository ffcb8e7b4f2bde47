// Descriptive statistics of a sample. Inputs are plain numbers in whatever unit the caller uses (degrees,
// rpm…); outputs keep that unit. Empty samples give null figures rather than NaN.

export interface Description {
  n: number;
  mean: number | null;
  /** Sample standard deviation (n − 1 in the denominator). */
  sd: number | null;
  median: number | null;
  min: number | null;
  max: number | null;
  /** Adjusted Fisher–Pearson skewness G1 (the one spreadsheets and most statistics packages report). */
  skewness: number | null;
  q1: number | null;
  q3: number | null;
}

export function mean(values: readonly number[]): number {
  let sum = 0;
  for (const v of values) sum += v;
  return sum / values.length;
}

export function sampleSd(values: readonly number[], m = mean(values)): number {
  if (values.length < 2) return NaN;
  let ss = 0;
  for (const v of values) ss += (v - m) * (v - m);
  return Math.sqrt(ss / (values.length - 1));
}

/** Quantile of sorted values by linear interpolation between order statistics (Hyndman & Fan type 7). */
export function quantileSorted(sorted: readonly number[], p: number): number {
  if (sorted.length === 0) return NaN;
  const h = (sorted.length - 1) * p;
  const lo = Math.floor(h);
  const hi = Math.min(lo + 1, sorted.length - 1);
  return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}

export function sortedCopy(values: readonly number[]): number[] {
  return Float64Array.from(values).sort() as unknown as number[];
}

/**
 * The same description from sums computed elsewhere (a database): n, mean, Σ(x − mean)², Σ(x − mean)³,
 * extremes and type-7 quartiles.
 */
export function describeFromSums(s: {
  n: number;
  mean: number | null;
  ss2: number | null;
  ss3: number | null;
  min: number | null;
  max: number | null;
  q1: number | null;
  median: number | null;
  q3: number | null;
}): Description {
  const { n } = s;
  if (n === 0 || s.mean === null)
    return {
      n: 0,
      mean: null,
      sd: null,
      median: null,
      min: null,
      max: null,
      skewness: null,
      q1: null,
      q3: null,
    };
  const m2 = (s.ss2 ?? 0) / n;
  const m3 = (s.ss3 ?? 0) / n;
  const g1 = m2 > 0 ? m3 / Math.pow(m2, 1.5) : 0;
  return {
    n,
    mean: s.mean,
    sd: n >= 2 ? Math.sqrt((s.ss2 ?? 0) / (n - 1)) : null,
    median: s.median,
    min: s.min,
    max: s.max,
    skewness: n >= 3 ? (Math.sqrt(n * (n - 1)) / (n - 2)) * g1 : null,
    q1: s.q1,
    q3: s.q3,
  };
}

export function describe(values: readonly number[]): Description {
  const n = values.length;
  if (n === 0) {
    return {
      n,
      mean: null,
      sd: null,
      median: null,
      min: null,
      max: null,
      skewness: null,
      q1: null,
      q3: null,
    };
  }
  const sorted = Array.from(sortedCopy(values));
  const m = mean(values);
  let m2 = 0;
  let m3 = 0;
  for (const v of values) {
    const d = v - m;
    m2 += d * d;
    m3 += d * d * d;
  }
  m2 /= n;
  m3 /= n;
  const g1 = m2 > 0 ? m3 / Math.pow(m2, 1.5) : 0;
  const skewness = n >= 3 ? (Math.sqrt(n * (n - 1)) / (n - 2)) * g1 : null;
  return {
    n,
    mean: m,
    sd: n >= 2 ? sampleSd(values, m) : null,
    median: quantileSorted(sorted, 0.5),
    min: sorted[0],
    max: sorted[n - 1],
    skewness,
    q1: quantileSorted(sorted, 0.25),
    q3: quantileSorted(sorted, 0.75),
  };
}

export interface HistogramBin {
  from: number;
  to: number;
  count: number;
}

/** Equal-width histogram; the bin count follows the Freedman–Diaconis rule, bounded to 5…80 bins. */
export function histogram(values: readonly number[], extent?: { min: number; max: number }): HistogramBin[] {
  if (values.length === 0) return [];
  const d = describe(values);
  const lo = Math.min(extent?.min ?? d.min!, d.min!);
  const hi = Math.max(extent?.max ?? d.max!, d.max!);
  if (hi === lo) return [{ from: lo - 0.5, to: hi + 0.5, count: values.length }];
  const iqr = d.q3! - d.q1!;
  const width = iqr > 0 ? (2 * iqr) / Math.cbrt(values.length) : (hi - lo) / 10;
  const bins = Math.max(5, Math.min(80, Math.ceil((hi - lo) / width)));
  const step = (hi - lo) / bins;
  const out: HistogramBin[] = Array.from({ length: bins }, (_, i) => ({
    from: lo + i * step,
    to: lo + (i + 1) * step,
    count: 0,
  }));
  for (const v of values) {
    const i = Math.min(bins - 1, Math.floor((v - lo) / step));
    out[i].count += 1;
  }
  return out;
}
