import { expect, it } from 'vitest';
import {
  clipForEwma,
  ewmaChart,
  ewmaSigma,
  individualsChart,
  subgroupChart,
  consecutiveSubgroups,
  variableSubgroupChart,
} from './charts';
import { chartConstants } from './constants';

// NIST/SEMATECH e-Handbook §6.3.2.2: the ten values are recalled from memory; they reproduce every published
// output (x̄ 50.81, MR̄ 1.8778, UCL 55.8041, LCL 45.8159, MR UCL 6.1347), which is what is checked.
const NIST_INDIVIDUALS = [49.6, 47.6, 49.9, 51.3, 47.8, 51.2, 52.6, 52.4, 53.6, 52.1];

it('gives the individuals and moving-range limits of the NIST example', () => {
  const c = individualsChart(NIST_INDIVIDUALS)!;
  expect(c.baseline.center).toBeCloseTo(50.81, 2);
  expect(c.spread.center[0]).toBeCloseTo(1.8778, 4);
  // NIST divides by the rounded d2 = 1.128 (exactly 2/√π = 1.12838), so agreement is to 0.005.
  expect(c.location.ucl[0]).toBeCloseTo(55.8041, 2);
  expect(c.location.lcl[0]).toBeCloseTo(45.8159, 2);
  expect(c.location.ucl[0]).toBeCloseTo(50.81 + (3 * (16.9 / 9)) / (2 / Math.sqrt(Math.PI)), 8);
  // NIST multiplies by the rounded D4 = 3.267; the integrated D4 is 3.2665, so agreement is to 0.005.
  expect(c.spread.ucl[0]).toBeCloseTo(6.1347, 2);
  expect(c.spread.lcl[0]).toBe(0);
  expect(c.spread.values).toHaveLength(9);
});

it('gives EWMA limits 47.4116 to 52.5884 for λ 0.3, target 50, s 2.0539', () => {
  // NIST/SEMATECH e-Handbook §6.3.2.4 (steady-state limits, L = 3).
  const c = ewmaChart(
    NIST_INDIVIDUALS,
    { lambda: 0.3, L: 3, asymptotic: true },
    { center: 50, sigma: 2.0539 },
  )!;
  expect(c.line.ucl[5]).toBeCloseTo(52.5884, 3);
  expect(c.line.lcl[5]).toBeCloseTo(47.4116, 3);
  // z₁ = 0.3·49.6 + 0.7·50 (the recursion of the same section).
  expect(c.line.values[0]).toBeCloseTo(49.88, 10);
});

it('narrows the first EWMA limits by √(1 − (1−λ)^{2i}) and approaches the steady state', () => {
  // Montgomery, Introduction to Statistical Quality Control, §9.2 (exact EWMA variance).
  expect(ewmaSigma(1, 0.2, 1)).toBeCloseTo(0.2, 12);
  expect(ewmaSigma(1, 0.2, 1000)).toBeCloseTo(Math.sqrt(0.2 / 1.8), 12);
});

it('puts X̄-R limits at x̿ ± A2·R̄ and the range chart at D3·R̄ … D4·R̄', () => {
  // Shewhart X̄-R limits as in Montgomery §6.2 with the Appendix VI constants for n = 5.
  const groups = [
    [74.03, 74.002, 74.019, 73.992, 74.008],
    [73.995, 73.992, 74.001, 74.011, 74.004],
    [73.988, 74.024, 74.021, 74.005, 74.002],
    [74.002, 73.996, 73.993, 74.015, 74.009],
  ];
  const c = subgroupChart(groups, 'xbar-r')!;
  const means = groups.map((g) => g.reduce((a, b) => a + b) / 5);
  const ranges = groups.map((g) => Math.max(...g) - Math.min(...g));
  const xbb = means.reduce((a, b) => a + b) / 4;
  const rbar = ranges.reduce((a, b) => a + b) / 4;
  expect(c.location.ucl[0]).toBeCloseTo(xbb + 0.577 * rbar, 4);
  expect(c.location.lcl[0]).toBeCloseTo(xbb - 0.577 * rbar, 4);
  expect(c.spread.ucl[0]).toBeCloseTo(2.114 * rbar, 4);
  expect(c.spread.lcl[0]).toBe(0);
});

it('puts X̄-S limits at x̿ ± A3·s̄ and the s chart at B3·s̄ … B4·s̄', () => {
  const groups = consecutiveSubgroups([1, 3, 2, 5, 4, 6, 2, 2, 3, 7, 1, 4, 5, 5, 6, 3, 2, 4], 6);
  const c = subgroupChart(groups, 'xbar-s')!;
  const k = chartConstants(6);
  const sd = (g: number[]) => {
    const m = g.reduce((a, b) => a + b) / g.length;
    return Math.sqrt(g.reduce((a, b) => a + (b - m) ** 2, 0) / (g.length - 1));
  };
  const sbar = groups.map(sd).reduce((a, b) => a + b) / groups.length;
  expect(c.location.ucl[0] - c.location.center[0]).toBeCloseTo(k.A3 * sbar, 10);
  expect(c.spread.ucl[0]).toBeCloseTo(k.B4 * sbar, 10);
  expect(c.spread.lcl[0]).toBeCloseTo(k.B3 * sbar, 10);
});

it('keeps frozen limits whatever the data shown', () => {
  const c = individualsChart([100, 101, 99, 100.5], { center: 10, sigma: 2 })!;
  expect(c.location.ucl[0]).toBe(16);
  expect(c.location.lcl[0]).toBe(4);
});

it('lets one gross value move the EWMA by at most λ·3σ, and leaves values within 3σ as they are', () => {
  // Common practice for robust EWMA charts (a Huber-type limit on each value's influence), no single source.
  const baseline = { center: 0, sigma: 1 };
  const c = ewmaChart([0, 0, 20, 0], { lambda: 0.2, L: 3, asymptotic: true }, baseline)!;
  // Unclipped, z₃ would be 0.2·20 = 4, far past the 1.0 limit; clipped to 3σ it is 0.6, inside.
  expect(c.line.values[2]).toBeCloseTo(0.6, 12);
  expect(c.line.values[2]).toBeLessThan(c.line.ucl[2]);
  // Near miss: a value just inside 3σ enters unchanged, one just outside is held at 3σ.
  expect(clipForEwma(2.999, baseline)).toBe(2.999);
  expect(clipForEwma(-3.001, baseline)).toBe(-3);
  // A lasting shift of 2σ is still caught: λ·2·(1 + 0.8 + 0.64 + …) passes 3·√(0.2/1.8) = 1.0 by the 4th point.
  const shift = ewmaChart([0, 2, 2, 2, 2], { lambda: 0.2, L: 3, asymptotic: true }, baseline)!;
  expect(shift.line.values[4]).toBeGreaterThan(shift.line.ucl[4]);
});

it('draws subgroups of unequal size with each point’s own limits, and equals the fixed-size chart when sizes agree', () => {
  const groups = [
    [10.1, 9.8, 10.4, 10.0, 9.9],
    [10.3, 10.1, 9.7, 10.2, 10.0],
    [9.6, 10.2, 10.1, 9.9, 10.4],
  ];
  for (const kind of ['xbar-r', 'xbar-s'] as const) {
    const fixed = subgroupChart(groups, kind)!;
    const variable = variableSubgroupChart(groups, kind)!;
    expect(variable.baseline.center).toBeCloseTo(fixed.baseline.center, 12);
    expect(variable.baseline.sigma).toBeCloseTo(fixed.baseline.sigma, 12);
    expect(variable.location.ucl).toEqual(fixed.location.ucl.map((u) => expect.closeTo(u, 12)));
    expect(variable.spread.ucl).toEqual(fixed.spread.ucl.map((u) => expect.closeTo(u, 12)));
  }
  // An hour with 2 units and one with 5: the smaller subgroup's mean gets wider limits, by √(5/2).
  const c = variableSubgroupChart([[10, 10.4], ...groups], 'xbar-r', { center: 10, sigma: 0.3 })!;
  const half = (i: number) => c.location.ucl[i] - c.location.center[i];
  expect(half(0) / half(1)).toBeCloseTo(Math.sqrt(5 / 2), 12);
  // Range limits of n = 2 and n = 5 against Montgomery's Appendix VI: D4·d2 = 3.267·1.128 and 2.114·2.326.
  expect(c.spread.ucl[0]).toBeCloseTo(3.267 * 1.128 * 0.3, 2);
  expect(c.spread.ucl[1]).toBeCloseTo(2.114 * 2.326 * 0.3, 2);
});
