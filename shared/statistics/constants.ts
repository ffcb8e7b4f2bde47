import { normalCdf } from './distributions';

// Control-chart constants for subgroup size n (2…25).
// d2 and d3 (mean and standard deviation of the relative range W = R/σ of n normal values) have no closed form;
// ASTM E2587 and Montgomery, Introduction to Statistical Quality Control, Appendix VI tabulate them rounded, so
// they are integrated here (and the tests compare with those tables).
// c4 is exact: c4 = √(2/(n−1)) · Γ(n/2) / Γ((n−1)/2). Every other constant follows from them:
//   A2 = 3/(d2√n)  D3 = max(0, 1 − 3d3/d2)  D4 = 1 + 3d3/d2
//   A3 = 3/(c4√n)  B3 = max(0, 1 − 3√(1−c4²)/c4)  B4 = 1 + 3√(1−c4²)/c4

const cache = new Map<number, { d2: number; d3: number }>();

/**
 * d2 = E[W] and d3 = sd(W) of the relative range W of n standard normal values, by numerical integration of
 * F_W(w) = n ∫ φ(x) (Φ(x + w) − Φ(x))^(n−1) dx (Tippett 1925), E[W] = ∫ (1 − F_W), E[W²] = 2 ∫ w (1 − F_W).
 * Simpson's rule on a 0.02 grid; accurate to better than 1e-5 for n ≤ 25, far below the tables' rounding.
 */
function rangeMoments(n: number): { d2: number; d3: number } {
  const hit = cache.get(n);
  if (hit) return hit;
  const h = 0.02;
  const xMin = -8;
  const xCount = 801; // −8 … 8
  const wCount = 601; // 0 … 12
  const phiCdf = new Float64Array(xCount + wCount);
  for (let i = 0; i < phiCdf.length; i++) phiCdf[i] = normalCdf(xMin + i * h);
  const phiPdf = new Float64Array(xCount);
  for (let i = 0; i < xCount; i++) phiPdf[i] = Math.exp(-0.5 * (xMin + i * h) ** 2) / Math.sqrt(2 * Math.PI);
  const simpson = (i: number, count: number) => (i === 0 || i === count - 1 ? 1 : i % 2 === 1 ? 4 : 2);
  let ew = 0;
  let ew2 = 0;
  for (let j = 0; j < wCount; j++) {
    let f = 0;
    for (let i = 0; i < xCount; i++) {
      const d = phiCdf[i + j] - phiCdf[i];
      f += simpson(i, xCount) * phiPdf[i] * Math.pow(d, n - 1);
    }
    const survival = 1 - (n * f * h) / 3;
    const wgt = simpson(j, wCount);
    ew += wgt * survival;
    ew2 += wgt * 2 * j * h * survival;
  }
  ew *= h / 3;
  ew2 *= h / 3;
  const out = { d2: ew, d3: Math.sqrt(ew2 - ew * ew) };
  cache.set(n, out);
  return out;
}

export const MIN_SUBGROUP = 2;
export const MAX_SUBGROUP = 25;

export interface ChartConstants {
  n: number;
  d2: number;
  d3: number;
  c4: number;
  A2: number;
  A3: number;
  D3: number;
  D4: number;
  B3: number;
  B4: number;
}

/** ln Γ(x) for x > 0 (Lanczos, g = 7, 9 terms; relative error below 1e-15 in double precision). */
function logGamma(x: number): number {
  const g = 7;
  const c = [
    0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059,
    12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7,
  ];
  const z = x - 1;
  let a = c[0];
  const t = z + g + 0.5;
  for (let i = 1; i < g + 2; i++) a += c[i] / (z + i);
  return 0.5 * Math.log(2 * Math.PI) + (z + 0.5) * Math.log(t) - t + Math.log(a);
}

export function c4(n: number): number {
  return Math.sqrt(2 / (n - 1)) * Math.exp(logGamma(n / 2) - logGamma((n - 1) / 2));
}

export function chartConstants(n: number): ChartConstants {
  if (!Number.isInteger(n) || n < MIN_SUBGROUP || n > MAX_SUBGROUP) {
    throw new RangeError(`Subgroups must have between ${MIN_SUBGROUP} and ${MAX_SUBGROUP} units, not ${n}.`);
  }
  const { d2, d3 } = rangeMoments(n);
  const cc4 = c4(n);
  const sRel = Math.sqrt(1 - cc4 * cc4) / cc4;
  return {
    n,
    d2,
    d3,
    c4: cc4,
    A2: 3 / (d2 * Math.sqrt(n)),
    A3: 3 / (cc4 * Math.sqrt(n)),
    D3: Math.max(0, 1 - (3 * d3) / d2),
    D4: 1 + (3 * d3) / d2,
    B3: Math.max(0, 1 - 3 * sRel),
    B4: 1 + 3 * sRel,
  };
}
