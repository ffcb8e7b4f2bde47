import { movedBy, type Codes, type Partition, type Selection, type SortedOrder } from './calibration-store';
import type { AnalysisFigure } from '#shared/schemas/analysis';
import type { DistributionAggregate, GroupAggregate } from './calibration-aggregates.repository';

/**
 * The whole-model figures of the line statistics computed from the rows kept in memory (calibration-store.ts):
 * the same figures, by the same rules, as the SQL statements of calibration-aggregates.repository.ts compute
 * inside PostgreSQL (quartiles as percentile_cont, histogram bins, sums about the mean, moving ranges in
 * production order, tie-averaged ranks). Pure (a selection in, numbers out), except sortedOrderOf, which keeps
 * each figure's sorted order on its partition and brings it up to date. The tests hold both paths and the
 * pure functions of shared/statistics equal on the same data.
 */

/** Quantiles of sorted values as percentile_cont computes them. */
export function quantileSorted(sorted: Float64Array, p: number): number {
  const pos = p * (sorted.length - 1);
  const k = Math.floor(pos);
  return k + 1 < sorted.length ? sorted[k] + (pos - k) * (sorted[k + 1] - sorted[k]) : sorted[k];
}

/** Sorts order[from, to) by value, equal values keeping their order: bucket by value, then each bucket alike. */
function sortPlaces(order: Int32Array, from: number, to: number, values: Float64Array): void {
  const size = to - from;
  if (size <= 32) {
    for (let k = from + 1; k < to; k++) {
      const row = order[k];
      const v = values[row];
      let j = k - 1;
      while (j >= from && values[order[j]] > v) {
        order[j + 1] = order[j];
        j--;
      }
      order[j + 1] = row;
    }
    return;
  }
  let min = Infinity;
  let max = -Infinity;
  for (let k = from; k < to; k++) {
    const v = values[order[k]];
    if (v < min) min = v;
    if (v > max) max = v;
  }
  if (min === max) return;
  const buckets = Math.max(2, size >> 2);
  const scale = buckets / (max - min);
  if (!(scale > 0 && scale < Infinity)) {
    // Values too far apart to scale: a comparison sort of this range.
    const part = Array.from(order.subarray(from, to)).sort((a, b) => values[a] - values[b] || a - b);
    order.set(part, from);
    return;
  }
  const starts = new Int32Array(buckets + 1);
  for (let k = from; k < to; k++)
    starts[Math.min(buckets - 1, Math.floor((values[order[k]] - min) * scale)) + 1] += 1;
  let largest = 0;
  for (let b = 0; b < buckets; b++) {
    if (starts[b + 1] > largest) largest = starts[b + 1];
    starts[b + 1] += starts[b];
  }
  const copy = order.slice(from, to);
  const next = starts.slice(0, buckets);
  for (let k = 0; k < size; k++) {
    const row = copy[k];
    order[from + next[Math.min(buckets - 1, Math.floor((values[row] - min) * scale))]++] = row;
  }
  for (let b = 0; b < buckets; b++) {
    const s = from + starts[b];
    const e = from + starts[b + 1];
    if (e - s < 2) continue;
    if (largest === size) {
      // No progress (all but a few values packed together): a comparison sort of this range.
      const part = Array.from(order.subarray(s, e)).sort((x, y) => values[x] - values[y] || x - y);
      order.set(part, s);
    } else sortPlaces(order, s, e, values);
  }
}

/**
 * The places of the rows with a value in ascending order of value (equal values in production order), and
 * the values in that order.
 */
export function sortedPlaces(
  values: Float64Array,
  length: number,
): { order: Int32Array; values: Float64Array; n: number } {
  let n = 0;
  for (let i = 0; i < length; i++) if (values[i] === values[i]) n++;
  const room = Math.max(1024, Math.ceil(n * 1.02));
  const order = new Int32Array(room);
  for (let i = 0, k = 0; i < length; i++) if (values[i] === values[i]) order[k++] = i;
  sortPlaces(order, 0, n, values);
  const inOrder = new Float64Array(room);
  for (let k = 0; k < n; k++) inOrder[k] = values[order[k]];
  return { order, values: inOrder, n };
}

/** Rows added at once above this are sorted again with all the others rather than merged in. */
const MERGE_AT_MOST = 50_000;

/**
 * The figure's sorted order, kept on the partition and brought up to date: older places moved past rows added
 * between them, the added rows merged in by value. Changed in place: use it before the next await.
 */
export function sortedOrderOf(part: Partition, figure: AnalysisFigure): SortedOrder {
  const values = part.figures.get(figure)!;
  const kept = part.orders.get(figure);
  const changes = kept ? part.changesSince(kept.seen) : null;
  const added = changes ? changes.reduce((m, c) => m + c.t.length, 0) : 0;
  if (!kept || !changes || added > MERGE_AT_MOST) {
    const fresh = { seen: part.changeCount, ...sortedPlaces(values, part.length) };
    part.orders.set(figure, fresh);
    return fresh;
  }
  if (changes.length === 0) return kept;
  const { order } = kept;
  let n = kept.n;
  for (const c of changes)
    if (c.shifts.length > 0 && c.shifts[0] < c.before)
      for (let k = 0; k < n; k++) order[k] = movedBy(c, order[k]);
  const places = Array.from(part.placesOfAdded(changes))
    .filter((i) => values[i] === values[i])
    .sort((a, b) => values[a] - values[b]);
  const m = places.length;
  let target = order;
  let inOrder = kept.values;
  if (n + m > order.length) {
    const room = Math.ceil((n + m) * 1.02) + 1024;
    target = new Int32Array(room);
    target.set(order.subarray(0, n));
    inOrder = new Float64Array(room);
    inOrder.set(kept.values.subarray(0, n));
  }
  // From the back: each older place moves up past the added values below it.
  let i = n - 1;
  let w = n + m - 1;
  for (let j = m - 1; j >= 0; j--) {
    const v = values[places[j]];
    while (i >= 0 && inOrder[i] > v) {
      target[w] = target[i];
      inOrder[w--] = inOrder[i--];
    }
    target[w] = places[j];
    inOrder[w--] = v;
  }
  n += m;
  const current = { seen: part.changeCount, order: target, values: inOrder, n };
  part.orders.set(figure, current);
  return current;
}

/** Marks the selected rows (1) among a partition's `length` rows. */
function selectedMask(sel: Selection): Uint8Array {
  const mask = new Uint8Array(sel.part.length);
  for (let k = 0; k < sel.n; k++) mask[sel.at[k]] = 1;
  return mask;
}

/**
 * The k-th smallest selected values for ascending ks (0-based), read along the sorted order: directly when
 * the selection holds every row with a value, else counting the selected rows on the way.
 */
export function orderStatistics(
  sorted: { order: Int32Array; values: Float64Array; n: number },
  selected: Uint8Array | null,
  ks: readonly number[],
): number[] {
  const out: number[] = [];
  if (!selected) {
    for (const k of ks) out.push(sorted.values[k]);
    return out;
  }
  let seen = -1;
  let next = 0;
  const { order, values } = sorted;
  for (let r = 0; r < sorted.n && next < ks.length; r++) {
    if (selected[order[r]] !== 1) continue;
    seen += 1;
    while (next < ks.length && ks[next] === seen) {
      out.push(values[r]);
      next += 1;
    }
  }
  return out;
}

/** Quantiles at ascending ps as PostgreSQL's percentile_cont computes them, from n order statistics. */
export function percentiles(
  n: number,
  ps: readonly number[],
  statistic: (ks: number[]) => number[],
): number[] {
  const ks: number[] = [];
  for (const p of ps) {
    const k = Math.floor(p * (n - 1));
    ks.push(k, Math.min(n - 1, k + 1));
  }
  const at = statistic(ks);
  return ps.map((p, q) => {
    const pos = p * (n - 1);
    const k = Math.floor(pos);
    return pos > k ? at[2 * q] + (pos - k) * (at[2 * q + 1] - at[2 * q]) : at[2 * q];
  });
}

/**
 * The distribution figures of a selection (see distributionAggregate for what each means): sums, extremes and
 * moving ranges along production order, the quartiles along the figure's sorted order.
 */
export function distributionOf(
  sel: Selection,
  sorted: SortedOrder,
  extent: { lsl: number | null; usl: number | null } | null,
  newestCount: number,
): DistributionAggregate {
  const { n, at, values } = sel;
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
  let previous = values[at[0]];
  for (let k = 0; k < n; k++) {
    const v = values[at[k]];
    sum += v;
    if (v < mn) mn = v;
    if (v > mx) mx = v;
    mr += Math.abs(v - previous);
    previous = v;
  }
  const mean = sum / n;
  const newest: number[] = [];
  for (let k = n - 1; k >= Math.max(0, n - newestCount); k--) newest.push(values[at[k]]);
  // Every row with a value selected: the sorted order is the selection's own.
  const mask = n === sorted.n ? null : selectedMask(sel);
  const [q1, median, q3] = percentiles(n, [0.25, 0.5, 0.75], (ks) => orderStatistics(sorted, mask, ks));
  const lo = extent ? Math.min(extent.lsl ?? mn, mn) : mn;
  const hi = extent ? Math.max(extent.usl ?? mx, mx) : mx;
  const width = q3 - q1 > 0 ? (2 * (q3 - q1)) / Math.cbrt(n) : (hi - lo) / 10;
  const bins = hi === lo ? 1 : Math.max(5, Math.min(80, Math.ceil((hi - lo) / width)));
  const counts = new Array<number>(bins).fill(0);
  const step = hi === lo ? 0 : (hi - lo) / bins;
  let ss2 = 0;
  let ss3 = 0;
  for (let k = 0; k < n; k++) {
    const v = values[at[k]];
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

/** A selection split into groups: each group's values ascending and newest, and the ranks Kruskal–Wallis needs. */
export interface Grouped {
  /** The code of each group (`column[row] + plus`), in order of first appearance in production order. */
  codes: number[];
  /** Each group's values ascending: views into the scratch arrays, good until the next call. */
  sorted: Float64Array[];
  /** Each group's newest values (at most newestCount), oldest first. */
  newest: Float64Array[];
  /** Sums of the tie-averaged ranks of each group's values among all the selection's values. */
  rankSums: Float64Array;
  /** Σ (t³ − t) over runs of t tied values. */
  ties: number;
}

/**
 * Room reused from call to call (kept by the store): a comparison of a million values would otherwise leave
 * 10 MB behind it each time, for the collector to find later.
 */
export interface GroupScratch {
  values: Float64Array;
  tag: Uint16Array;
}

/** Groups a comparison can show (a group's number is kept in 16 bits). */
export const MAX_GROUPS = 65_535;

/**
 * Splits a selection into groups by a code per row (`column[row] + plus`, a small non-negative integer), in
 * one pass along production order (sizes, newest values) and one along the figure's sorted order (each
 * group's values ascending; each run of equal values, from whichever groups, shares the average of the ranks
 * it spans).
 */
export function groupsOf(
  sel: Selection,
  sorted: { order: Int32Array; values: Float64Array; n: number },
  column: Codes,
  plus: number,
  newestCount: number,
  scratch: GroupScratch,
): Grouped {
  const { at, n, values } = sel;
  let lookup = new Int32Array(64).fill(-1);
  const codes: number[] = [];
  let sizes = new Int32Array(64);
  // The group of each selected row, plus one (0: not selected), read at random along the sorted order: 16 bits
  // stay in the processor's cache.
  if (scratch.tag.length < sel.part.length) scratch.tag = new Uint16Array(Math.ceil(sel.part.length * 1.02));
  else scratch.tag.fill(0, 0, sel.part.length);
  const { tag } = scratch;
  for (let k = 0; k < n; k++) {
    const row = at[k];
    const c = column[row] + plus;
    if (c >= lookup.length) {
      const wider = new Int32Array(Math.max(c + 1, lookup.length * 2)).fill(-1);
      wider.set(lookup);
      lookup = wider;
    }
    let g = lookup[c];
    if (g < 0) {
      g = lookup[c] = codes.length;
      if (g === MAX_GROUPS)
        throw new RangeError(`more than ${MAX_GROUPS.toLocaleString('en')} groups to compare`);
      codes.push(c);
      if (g === sizes.length) {
        const more = new Int32Array(sizes.length * 2);
        more.set(sizes);
        sizes = more;
      }
    }
    sizes[g] += 1;
    tag[row] = g + 1;
  }
  const count = codes.length;
  if (scratch.values.length < n) scratch.values = new Float64Array(Math.ceil(n * 1.02));
  const groupSorted: Float64Array[] = [];
  for (let g = 0, from = 0; g < count; from += sizes[g++])
    groupSorted.push(scratch.values.subarray(from, from + sizes[g]));
  const fill = new Int32Array(count);
  const rankSums = new Float64Array(count);
  // Each value first takes the next rank; a run of equal values (rare) is then given the average of the ranks
  // it took, group by group. Plain locals in the loop (no closure over them: V8 would keep them in memory).
  let runGroups = new Int32Array(16);
  let run = 0;
  let ranked = 0;
  let ties = 0;
  let last = NaN;
  const { order } = sorted;
  const inOrder = sorted.values;
  for (let r = 0; r <= sorted.n; r++) {
    let g = -1;
    let v = NaN;
    if (r < sorted.n) {
      g = tag[order[r]] - 1;
      if (g < 0) continue;
      v = inOrder[r];
      groupSorted[g][fill[g]++] = v;
      if (v === last) {
        // One more of a run: it takes the next rank for now.
        ranked += 1;
        rankSums[g] += ranked;
        if (run === runGroups.length) {
          const more = new Int32Array(run * 2);
          more.set(runGroups);
          runGroups = more;
        }
        runGroups[run++] = g;
        continue;
      }
    }
    if (run > 1) {
      // The run that ended spans ranks ranked − t + 1 … ranked, taken in turn: each takes their average.
      const t = run;
      for (let k = 0; k < t; k++) rankSums[runGroups[k]] += (t - 1) / 2 - k;
      ties += t * t * t - t;
    }
    if (g < 0) break;
    ranked += 1;
    rankSums[g] += ranked;
    runGroups[0] = g;
    run = 1;
    last = v;
  }
  const newest = Array.from(
    sizes.subarray(0, count),
    (size) => new Float64Array(Math.min(size, newestCount)),
  );
  const got = new Int32Array(count);
  let missing = newest.reduce((m, a) => m + a.length, 0);
  for (let k = n - 1; k >= 0 && missing > 0; k--) {
    const row = at[k];
    const g = tag[row] - 1;
    const list = newest[g];
    if (got[g] < list.length) {
      list[list.length - 1 - got[g]++] = values[row];
      missing -= 1;
    }
  }
  return { codes, sorted: groupSorted, newest, rankSums, ties };
}

/** One group's figures (see comparisonAggregate) from its values ascending and its newest values. */
export function groupOf(
  key: string,
  sorted: Float64Array,
  newest: Float64Array,
  maxOutliers: number,
): MemoryGroup {
  const n = sorted.length;
  let sum = 0;
  for (let i = 0; i < n; i++) sum += sorted[i];
  const mean = sum / n;
  let ss = 0;
  for (let i = 0; i < n; i++) ss += (sorted[i] - mean) ** 2;
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
    newest: Array.from(newest),
  };
}
