// Comparing groups of values (by station, lot, operator, recipe version): per-group summaries with a 95 %
// confidence interval of the mean (Student's t) and box-plot figures, a one-way test, and the groups whose mean
// differs from the rest by more than a practical threshold.
//   Welch's ANOVA: Welch (1951), Biometrika 38, 330–336 (no equal-variance assumption).
//   Kruskal–Wallis H with the tie correction: Kruskal & Wallis (1952), JASA 47, 583–621; p from χ²(k−1).
import { chiSquareUpperTail, fUpperTail, tQuantile } from './distributions';
import { mean, quantileSorted, sampleSd, sortedCopy } from './descriptive';

export interface BoxFigures {
  q1: number;
  median: number;
  q3: number;
  /** Lowest and highest values within 1.5 IQR of the box (Tukey's whiskers). */
  whiskerLow: number;
  whiskerHigh: number;
  /** Values outside the whiskers. */
  outliers: number[];
}

export interface GroupSummary {
  key: string;
  n: number;
  mean: number;
  sd: number | null;
  ciLow: number | null;
  ciHigh: number | null;
  box: BoxFigures;
}

/** Outliers listed per group are capped so that a huge group cannot blow up a response. */
const MAX_OUTLIERS = 200;

export function boxFigures(values: readonly number[]): BoxFigures {
  const s = sortedCopy(values);
  const q1 = quantileSorted(s, 0.25);
  const q3 = quantileSorted(s, 0.75);
  const iqr = q3 - q1;
  const lo = q1 - 1.5 * iqr;
  const hi = q3 + 1.5 * iqr;
  let whiskerLow = q1;
  let whiskerHigh = q3;
  const outliers: number[] = [];
  for (const v of s) {
    if (v < lo || v > hi) {
      if (outliers.length < MAX_OUTLIERS) outliers.push(v);
    } else {
      whiskerLow = Math.min(whiskerLow, v);
      whiskerHigh = Math.max(whiskerHigh, v);
    }
  }
  return { q1, median: quantileSorted(s, 0.5), q3, whiskerLow, whiskerHigh, outliers };
}

export function summarizeGroup(key: string, values: readonly number[], confidence = 0.95): GroupSummary {
  const n = values.length;
  const m = mean(values);
  const sd = n >= 2 ? sampleSd(values, m) : null;
  return summarizeGroupFromFigures(key, { n, mean: m, sd }, boxFigures(values), confidence);
}

/** The same summary from figures computed elsewhere (a database). */
export function summarizeGroupFromFigures(
  key: string,
  { n, mean: m, sd }: { n: number; mean: number; sd: number | null },
  box: BoxFigures,
  confidence = 0.95,
): GroupSummary {
  const half = sd !== null ? tQuantile(1 - (1 - confidence) / 2, n - 1) * (sd / Math.sqrt(n)) : null;
  return {
    key,
    n,
    mean: m,
    sd,
    ciLow: half !== null ? m - half : null,
    ciHigh: half !== null ? m + half : null,
    box,
  };
}

export interface OneWayTest {
  test: 'welch-anova' | 'kruskal-wallis';
  statistic: number;
  df1: number;
  /** Denominator degrees of freedom (Welch only). */
  df2: number | null;
  pValue: number;
}

/** Welch's one-way ANOVA. Groups with fewer than 2 values or no spread are left out; null below 2 groups. */
export function welchAnova(groups: readonly (readonly number[])[]): OneWayTest | null {
  return welchAnovaFromSummaries(
    groups.map((g) => {
      const m = g.length > 0 ? mean(g) : NaN;
      return { n: g.length, mean: m, sd: g.length >= 2 ? sampleSd(g, m) : null };
    }),
  );
}

/** Welch's one-way ANOVA from each group's size, mean and sample standard deviation. */
export function welchAnovaFromSummaries(
  groups: readonly { n: number; mean: number; sd: number | null }[],
): OneWayTest | null {
  const usable = groups.filter((g) => g.n >= 2 && g.sd !== null && g.sd > 0);
  const k = usable.length;
  if (k < 2) return null;
  const n = usable.map((g) => g.n);
  const m = usable.map((g) => g.mean);
  const w = usable.map((g, i) => n[i] / g.sd! ** 2);
  const sw = w.reduce((a, b) => a + b, 0);
  const grand = w.reduce((a, wi, i) => a + wi * m[i], 0) / sw;
  const between = w.reduce((a, wi, i) => a + wi * (m[i] - grand) ** 2, 0) / (k - 1);
  const lambda = usable.reduce((a, _g, i) => a + (1 - w[i] / sw) ** 2 / (n[i] - 1), 0);
  const f = between / (1 + ((2 * (k - 2)) / (k * k - 1)) * lambda);
  const df2 = (k * k - 1) / (3 * lambda);
  return { test: 'welch-anova', statistic: f, df1: k - 1, df2, pValue: fUpperTail(f, k - 1, df2) };
}

/** Kruskal–Wallis H with average ranks for ties and the tie correction. Null below 2 non-empty groups. */
export function kruskalWallis(groups: readonly (readonly number[])[]): OneWayTest | null {
  const usable = groups.filter((g) => g.length > 0);
  const k = usable.length;
  if (k < 2) return null;
  const all: { v: number; g: number }[] = [];
  usable.forEach((g, gi) => g.forEach((v) => all.push({ v, g: gi })));
  all.sort((a, b) => a.v - b.v);
  const N = all.length;
  const rankSum = new Array<number>(k).fill(0);
  let ties = 0;
  for (let i = 0; i < N;) {
    let j = i;
    while (j + 1 < N && all[j + 1].v === all[i].v) j++;
    const rank = (i + j) / 2 + 1;
    for (let t = i; t <= j; t++) rankSum[all[t].g] += rank;
    const c = j - i + 1;
    ties += c * c * c - c;
    i = j + 1;
  }
  return kruskalWallisFromRanks(
    usable.map((g, gi) => ({ n: g.length, rankSum: rankSum[gi] })),
    ties,
  );
}

/**
 * Kruskal–Wallis H from each group's size and sum of tie-averaged ranks among all values, and Σ (t³ − t) over
 * the groups of tied values. Null below 2 non-empty groups.
 */
export function kruskalWallisFromRanks(
  groups: readonly { n: number; rankSum: number }[],
  ties: number,
): OneWayTest | null {
  const usable = groups.filter((g) => g.n > 0);
  const k = usable.length;
  if (k < 2) return null;
  const N = usable.reduce((a, g) => a + g.n, 0);
  let h = 0;
  for (const g of usable) h += (g.rankSum * g.rankSum) / g.n;
  h = (12 / (N * (N + 1))) * h - 3 * (N + 1);
  const correction = 1 - ties / (N * N * N - N);
  if (correction > 0) h /= correction;
  return {
    test: 'kruskal-wallis',
    statistic: h,
    df1: k - 1,
    df2: null,
    pValue: chiSquareUpperTail(h, k - 1),
  };
}

export interface GroupDifference {
  key: string;
  /** Group mean minus the mean of the values of the groups not singled out, in the values' unit. */
  differenceFromRest: number;
}

/**
 * Groups whose mean differs from the rest by more than `threshold` (same unit), largest first. One group at a
 * time: the group furthest from the mean of all other remaining values is singled out if beyond the threshold,
 * then left out of "the rest" for the next round. Comparing with the rest (not the grand mean) and leaving out
 * what was singled out keeps one large bad group from dragging the reference and making good groups look bad.
 */
export function groupsBeyondThreshold(
  groups: readonly { key: string; values: readonly number[] }[],
  threshold: number,
): GroupDifference[] {
  return groupsBeyondThresholdFromMeans(
    groups
      .filter((g) => g.values.length > 0)
      .map((g) => ({ key: g.key, n: g.values.length, mean: mean(g.values) })),
    threshold,
  );
}

/** The same from each group's size and mean. */
export function groupsBeyondThresholdFromMeans(
  groups: readonly { key: string; n: number; mean: number }[],
  threshold: number,
): GroupDifference[] {
  const remaining = groups.filter((g) => g.n > 0).map((g) => ({ ...g }));
  const out: GroupDifference[] = [];
  while (remaining.length >= 2) {
    let total = 0;
    let count = 0;
    for (const g of remaining) {
      total += g.mean * g.n;
      count += g.n;
    }
    let worst = -1;
    let worstD = 0;
    remaining.forEach((g, i) => {
      const d = g.mean - (total - g.mean * g.n) / (count - g.n);
      // Differences equal but for rounding (two groups left differ from each other by the same amount) are a
      // tie, and the first group keeps it: the pick must not hang on the order the sums were added in.
      if (Math.abs(d) > Math.abs(worstD) * (1 + 1e-12) + 1e-12) {
        worst = i;
        worstD = d;
      }
    });
    if (worst < 0 || !(Math.abs(worstD) > threshold)) break;
    out.push({ key: remaining[worst].key, differenceFromRest: worstD });
    remaining.splice(worst, 1);
  }
  return out;
}
