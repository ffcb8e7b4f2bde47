// Anderson–Darling test of normality with mean and variance estimated from the sample
// (Stephens' case 3). The p-value uses the modified statistic A*² = A²(1 + 0.75/n + 2.25/n²) and the
// piecewise formulas of D'Agostino & Stephens, Goodness-of-Fit Techniques (1986), table 4.9.
import { mean, sampleSd, sortedCopy } from './descriptive';
import { normalCdf } from './distributions';

export interface AndersonDarling {
  n: number;
  /** A² as computed from the sample. */
  statistic: number;
  /** A*², adjusted for the sample size. */
  adjusted: number;
  pValue: number;
}

/** Needs at least 8 values (below that the p-value formulas are not valid); returns null otherwise. */
export function andersonDarling(values: readonly number[]): AndersonDarling | null {
  const n = values.length;
  if (n < 8) return null;
  const m = mean(values);
  const s = sampleSd(values, m);
  if (!(s > 0)) return null;
  const x = sortedCopy(values);
  let sum = 0;
  for (let i = 0; i < n; i++) {
    // Clamp the probabilities so that a far outlier gives a huge statistic, not log(0).
    const fi = Math.min(Math.max(normalCdf((x[i] - m) / s), 1e-300), 1 - 1e-16);
    const fj = Math.min(Math.max(normalCdf((x[n - 1 - i] - m) / s), 1e-300), 1 - 1e-16);
    sum += (2 * i + 1) * (Math.log(fi) + Math.log(1 - fj));
  }
  const a2 = -n - sum / n;
  const a = a2 * (1 + 0.75 / n + 2.25 / (n * n));
  let p: number;
  if (a >= 0.6) p = Math.exp(1.2937 - 5.709 * a + 0.0186 * a * a);
  else if (a >= 0.34) p = Math.exp(0.9177 - 4.279 * a - 1.38 * a * a);
  else if (a >= 0.2) p = 1 - Math.exp(-8.318 + 42.796 * a - 59.938 * a * a);
  else p = 1 - Math.exp(-13.436 + 101.14 * a - 223.73 * a * a);
  return { n, statistic: a2, adjusted: a, pValue: Math.min(1, Math.max(0, p)) };
}
