import type { Selection } from './calibration-store';
import type { DistributionAggregate, GroupAggregate } from './calibration-aggregates.repository';

/**
 * The whole-model figures of the line statistics computed from the rows kept in memory (calibration-store.ts):
 * the same figures, by the same rules, as the SQL statements of calibration-aggregates.repository.ts compute
 * inside PostgreSQL (quartiles as percentile_cont, histogram bins, sums about the mean, moving ranges in
 * production order, tie-averaged ranks). Pure: a selection in, numbers out. The tests hold both paths and
 * the pure functions of shared/statistics equal on the same data.
 */

/** The values of a selection in production order. */
export function selectedValues(sel: Selection): Float64Array {
  const out = new Float64Array(sel.n);
  for (let k = 0; k < sel.n; k++) out[k] = sel.values[sel.at[k]];
  return out;
}

/** Puts the k-th smallest of a[lo..hi] at a[k] (smaller before it, larger after): Hoare's selection. */
function selectInPlace(a: Float64Array, k: number, lo: number, hi: number): number {
  while (hi > lo) {
    const pivot = a[(lo + hi) >>> 1];
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (a[i] < pivot) i++;
      while (a[j] > pivot) j--;
      if (i <= j) {
        const x = a[i];
        a[i] = a[j];
        a[j] = x;
        i++;
        j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else break;
  }
  return a[k];
}

/**
 * Quantiles as PostgreSQL's percentile_cont computes them (linear between the neighbouring order
 * statistics at p·(n − 1)), for ascending p, by selection (no full sort). Reorders `work`.
 */
export function quantilesInPlace(work: Float64Array, ps: readonly number[]): number[] {
  const n = work.length;
  const out: number[] = [];
  let from = 0;
  for (const p of ps) {
    const pos = p * (n - 1);
    const k = Math.floor(pos);
    const lower = selectInPlace(work, k, from, n - 1);
    let upper = lower;
    if (pos > k) {
      upper = Infinity;
      for (let i = k + 1; i < n; i++) if (work[i] < upper) upper = work[i];
    }
    out.push(lower + (pos - k) * (upper - lower));
    from = k;
  }
  return out;
}

/** Quantiles of sorted values as percentile_cont computes them. */
export function quantileSorted(sorted: Float64Array, p: number): number {
  const pos = p * (sorted.length - 1);
  const k = Math.floor(pos);
  return k + 1 < sorted.length ? sorted[k] + (pos - k) * (sorted[k + 1] - sorted[k]) : sorted[k];
}


/**
 * The distribution figures of a selection's values in production order (see distributionAggregate for what
 * each means). Reorders `values` (the quartiles are found by selection in place).
 */
export function distributionOf(
  values: Float64Array,
  extent: { lsl: number | null; usl: number | null } | null,
  newestCount: number,
): DistributionAggregate {
  const n = values.length;
  if (n === 0)
    return {
      n: 0,
      mean: null,
      ss2: null,
      ss3: null,
      min: null,
      max: null,
      q1: null,
      median: null,
      q3: null,
      movingRangeSum: null,
      histogram: null,
      newest: [],
    };
  let sum = 0;
  let mn = Infinity;
  let mx = -Infinity;
  let mr = 0;
  for (let i = 0; i < n; i++) {
    const v = values[i];
    sum += v;
    if (v < mn) mn = v;
    if (v > mx) mx = v;
    if (i > 0) mr += Math.abs(v - values[i - 1]);
  }
  const mean = sum / n;
  const newest: number[] = [];
  for (let i = n - 1; i >= Math.max(0, n - newestCount); i--) newest.push(values[i]);
  const [q1, median, q3] = quantilesInPlace(values, [0.25, 0.5, 0.75]);
  const lo = extent ? Math.min(extent.lsl ?? mn, mn) : mn;
  const hi = extent ? Math.max(extent.usl ?? mx, mx) : mx;
  const width = q3 - q1 > 0 ? (2 * (q3 - q1)) / Math.cbrt(n) : (hi - lo) / 10;
  const bins = hi === lo ? 1 : Math.max(5, Math.min(80, Math.ceil((hi - lo) / width)));
  const counts = new Array<number>(bins).fill(0);
  const step = hi === lo ? 0 : (hi - lo) / bins;
  let ss2 = 0;
  let ss3 = 0;
  for (let i = 0; i < n; i++) {
    const v = values[i];
    const d = v - mean;
    ss2 += d * d;
    ss3 += d * d * d;
    counts[hi > lo ? Math.min(bins - 1, Math.floor((v - lo) / step)) : 0] += 1;
  }
  return {
    n,
    mean,
    ss2,
    ss3,
    min: mn,
    max: mx,
    q1,
    median,
    q3,
    movingRangeSum: n > 1 ? mr : null,
    histogram: { lo, step, counts },
    newest,
  };
}

/** A group's figures as comparisonAggregate returns them, keyed by the grouping value ('' where not recorded). */
type MemoryGroup = Omit<GroupAggregate, 'key' | 'label'> & { key: string };


/** Splits a selection by a key per row: each group's values in production order. */
export function groupValues(sel: Selection, keyOf: (row: number) => string): Map<string, Float64Array> {
  const codes = new Map<string, number>();
  const rowGroup = new Int32Array(sel.n);
  const sizes: number[] = [];
  for (let k = 0; k < sel.n; k++) {
    const key = keyOf(sel.at[k]);
    let g = codes.get(key);
    if (g === undefined) {
      codes.set(key, (g = sizes.length));
      sizes.push(0);
    }
    rowGroup[k] = g;
    sizes[g] += 1;
  }
  const arrays = sizes.map((size) => new Float64Array(size));
  const fill = new Int32Array(sizes.length);
  for (let k = 0; k < sel.n; k++) {
    const g = rowGroup[k];
    arrays[g][fill[g]++] = sel.values[sel.at[k]];
  }
  return new Map([...codes].map(([key, g]) => [key, arrays[g]]));
}

/** One group's figures (see comparisonAggregate): its values in production order and sorted. */
export function groupOf(
  key: string,
  values: Float64Array,
  sorted: Float64Array,
  newestCount: number,
  maxOutliers: number,
): MemoryGroup {
  const n = values.length;
  let sum = 0;
  for (let i = 0; i < n; i++) sum += values[i];
  const mean = sum / n;
  let ss = 0;
  for (let i = 0; i < n; i++) ss += (values[i] - mean) ** 2;
  const q1 = quantileSorted(sorted, 0.25);
  const median = quantileSorted(sorted, 0.5);
  const q3 = quantileSorted(sorted, 0.75);
  const fenceLow = q1 - 1.5 * (q3 - q1);
  const fenceHigh = q3 + 1.5 * (q3 - q1);
  let inLow: number | null = null;
  let inHigh: number | null = null;
  const outliers: number[] = [];
  for (let i = 0; i < n; i++) {
    const v = sorted[i];
    if (v >= fenceLow && v <= fenceHigh) {
      inLow ??= v;
      inHigh = v;
    } else if (outliers.length < maxOutliers) outliers.push(v);
  }
  const newest = Array.from(values.subarray(Math.max(0, n - newestCount)));
  return {
    key,
    n,
    mean,
    sd: n > 1 ? Math.sqrt(ss / (n - 1)) : null,
    q1,
    median,
    q3,
    inLow,
    inHigh,
    outliers,
    newest,
  };
}

/**
 * Sums of the tie-averaged ranks of each group's values among all values, and Σ (t³ − t) over tied values
 * (Kruskal–Wallis), by merging the groups' sorted values (a heap of the groups by their next value): each
 * run of equal values, from whichever groups, shares the average of the ranks it spans.
 */
export function rankSumsOf(sortedGroups: Map<string, Float64Array>): {
  rankSums: Map<string, number>;
  ties: number;
} {
  const keys = [...sortedGroups.keys()];
  const lists = keys.map((k) => sortedGroups.get(k)!);
  const count = lists.length;
  const next = new Int32Array(count);
  const head = new Float64Array(count);
  const heap = new Int32Array(count);
  const sums = new Float64Array(count);
  const inRun = new Float64Array(count);
  const touched = new Int32Array(count);
  let size = 0;
  const siftDown = (from: number) => {
    let i = from;
    for (;;) {
      const l = 2 * i + 1;
      if (l >= size) return;
      const r = l + 1;
      const c = r < size && head[heap[r]] < head[heap[l]] ? r : l;
      if (!(head[heap[c]] < head[heap[i]])) return;
      const x = heap[i];
      heap[i] = heap[c];
      heap[c] = x;
      i = c;
    }
  };
  for (let g = 0; g < count; g++)
    if (lists[g].length > 0) {
      head[g] = lists[g][0];
      heap[size++] = g;
    }
  for (let i = (size >> 1) - 1; i >= 0; i--) siftDown(i);
  let ranked = 0;
  let ties = 0;
  while (size > 0) {
    const v = head[heap[0]];
    let t = 0;
    let nTouched = 0;
    while (size > 0 && head[heap[0]] === v) {
      const g = heap[0];
      const list = lists[g];
      let p = next[g];
      const start = p;
      while (p < list.length && list[p] === v) p++;
      next[g] = p;
      inRun[g] += p - start;
      touched[nTouched++] = g;
      t += p - start;
      if (p < list.length) head[g] = list[p];
      else heap[0] = heap[--size];
      siftDown(0);
    }
    const average = ranked + 1 + (t - 1) / 2;
    for (let k = 0; k < nTouched; k++) {
      const g = touched[k];
      sums[g] += inRun[g] * average;
      inRun[g] = 0;
    }
    ties += t * t * t - t;
    ranked += t;
  }
  return { rankSums: new Map(keys.map((k, g) => [k, sums[g]])), ties };
}
