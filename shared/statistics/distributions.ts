// Distribution functions for the SPC maths. Quantiles and tail probabilities come from jStat, a maintained
// general-purpose library that runs unchanged in Node and the browser; nothing here approximates them by hand.
import jStat from 'jstat';

/** Standard normal cumulative probability Φ(z). */
export function normalCdf(z: number): number {
  return jStat.normal.cdf(z, 0, 1);
}

/** Standard normal quantile Φ⁻¹(p). */
export function normalQuantile(p: number): number {
  return jStat.normal.inv(p, 0, 1);
}

/** Normal density with mean μ and standard deviation σ. */
export function normalPdf(x: number, mean: number, sd: number): number {
  return jStat.normal.pdf(x, mean, sd);
}

/** Chi-square quantile with `df` degrees of freedom. */
export function chiSquareQuantile(p: number, df: number): number {
  return jStat.chisquare.inv(p, df);
}

/** Upper tail P(X ≥ x) of a chi-square with `df` degrees of freedom. */
export function chiSquareUpperTail(x: number, df: number): number {
  return 1 - jStat.chisquare.cdf(x, df);
}

/** Student's t quantile with `df` degrees of freedom. */
export function tQuantile(p: number, df: number): number {
  return jStat.studentt.inv(p, df);
}

/** Upper tail P(F ≥ x) of an F distribution with (df1, df2) degrees of freedom (df2 may be fractional). */
export function fUpperTail(x: number, df1: number, df2: number): number {
  return 1 - jStat.centralF.cdf(x, df1, df2);
}
