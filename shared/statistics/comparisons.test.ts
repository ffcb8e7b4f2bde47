import { expect, it } from 'vitest';
import {
  groupsBeyondThreshold,
  groupsBeyondThresholdFromMeans,
  kruskalWallis,
  summarizeGroup,
  welchAnova,
  boxFigures,
} from './comparisons';

const A = [10.1, 9.8, 10.3, 10.0, 9.9, 10.2];
const B = [10.8, 11.2, 10.5, 11.0, 10.9];
const C = [9.5, 10.9, 8.7, 10.4, 11.6, 9.2, 10.1];

it("gives Welch's one-way ANOVA F and p as a reference library does", () => {
  // scipy.stats.f_oneway(A, B, C, equal_var=False), SciPy 1.17.1: F 16.83531863602232, p 0.0009786872109696326.
  const t = welchAnova([A, B, C])!;
  expect(t.statistic).toBeCloseTo(16.83531863602232, 8);
  expect(t.pValue).toBeCloseTo(0.0009786872109696326, 8);
});

it('gives the Kruskal–Wallis H and p as a reference library does, ties included', () => {
  // scipy.stats.kruskal, SciPy 1.17.1.
  const t = kruskalWallis([A, B, C])!;
  expect(t.statistic).toBeCloseTo(6.256229379031859, 9);
  expect(t.pValue).toBeCloseTo(0.043800296618275114, 9);
  const tied = kruskalWallis([
    [1, 2, 2, 3],
    [2, 3, 3, 4],
    [5, 5, 6],
  ])!;
  expect(tied.statistic).toBeCloseTo(7.440758293838867, 9);
  expect(tied.pValue).toBeCloseTo(0.024224781353062014, 9);
});

it('puts a Student-t 95 % interval around a group mean', () => {
  // t(0.975, 5) = 2.5706 (any t table); sd of A = 0.18708.
  const g = summarizeGroup('A', A);
  expect(g.mean).toBeCloseTo(10.05, 10);
  expect(g.ciHigh! - g.mean).toBeCloseTo((2.5706 * 0.187083) / Math.sqrt(6), 3);
});

it('draws whiskers to the furthest values within 1.5 IQR and lists the rest as outliers', () => {
  // Tukey's box plot; quartiles by linear interpolation (Hyndman & Fan type 7, the spreadsheet default).
  const b = boxFigures([1, 2, 3, 4, 5, 6, 7, 8, 9, 40]);
  expect(b.q1).toBeCloseTo(3.25, 10);
  expect(b.q3).toBeCloseTo(7.75, 10);
  expect(b.whiskerHigh).toBe(9);
  expect(b.outliers).toEqual([40]);
});

it('singles out the group whose mean is more than the threshold away from the rest, and no other', () => {
  const normal = (shift: number) => [-0.4, 0.1, 0.3, -0.2, 0.2].map((v) => v + shift);
  const groups = [
    { key: 'lot 1', values: normal(0) },
    { key: 'lot 2', values: normal(0.3) },
    { key: 'lot 3', values: normal(4) },
    { key: 'lot 4', values: normal(-0.2) },
  ];
  const out = groupsBeyondThreshold(groups, 1);
  expect(out.map((g) => g.key)).toEqual(['lot 3']);
  expect(out[0].differenceFromRest).toBeCloseTo(4 - 0.1 / 3, 10);
  expect(groupsBeyondThreshold(groups, 5)).toEqual([]);
});

it('of two groups differing from each other by the same amount but for rounding, the first is singled out', () => {
  // Common practice, no source: with two groups left, each differs from "the rest" (the other) by the same
  // amount; in floating point these two are 0.5722753886130079 and 0.5722753886130088 here, and the pick
  // must not depend on that last digit (nor on the order a mean's sum was added in).
  const groups = [
    { key: 'first', n: 7, mean: 5.480170387452592 },
    { key: 'second', n: 13, mean: 4.907894998839584 },
  ];
  expect(groupsBeyondThresholdFromMeans(groups, 0.5).map((g) => g.key)).toEqual(['first']);
  expect(groupsBeyondThresholdFromMeans([...groups].reverse(), 0.5).map((g) => g.key)).toEqual(['second']);
});
