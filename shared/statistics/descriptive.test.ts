import { expect, it } from 'vitest';
import { describe as summarize, histogram } from './descriptive';
import { andersonDarling } from './normality';

const X = [
  2.1, 3.4, 1.9, 5.6, 4.4, 3.3, 2.8, 4.9, 3.7, 3.0, 6.2, 2.5, 3.9, 4.1, 3.6, 2.2, 7.9, 3.1, 4.0, 3.5,
];

it('describes a sample with the figures a reference library gives', () => {
  // numpy / scipy.stats (SciPy 1.17.1): median 3.55, s 1.468072492115176, skew(bias=False) 1.282701436644058.
  const d = summarize(X);
  expect(d.n).toBe(20);
  expect(d.median).toBeCloseTo(3.55, 12);
  expect(d.sd).toBeCloseTo(1.468072492115176, 12);
  expect(d.skewness).toBeCloseTo(1.282701436644058, 10);
  expect(d.min).toBe(1.9);
  expect(d.max).toBe(7.9);
});

it('gives the Anderson–Darling statistic of a reference library and a p-value close to its table', () => {
  // scipy.stats.anderson(X, 'norm'), SciPy 1.17.1: A² 0.6007362035682675; its table-interpolated p 0.1032.
  // Our p uses D'Agostino & Stephens (1986) for A*²; the two methods agree to about 0.01.
  const ad = andersonDarling(X)!;
  expect(ad.statistic).toBeCloseTo(0.6007362035682675, 10);
  expect(Math.abs(ad.pValue - 0.1032)).toBeLessThan(0.01);
});

it('rejects normality for clearly skewed data and needs at least eight values', () => {
  const skewed = Array.from({ length: 200 }, (_, i) => Math.exp(i / 40));
  expect(andersonDarling(skewed)!.pValue).toBeLessThan(0.001);
  expect(andersonDarling([1, 2, 3, 4, 5, 6, 7])).toBeNull();
});

it('puts every value in exactly one histogram bin', () => {
  const bins = histogram(X);
  expect(bins.reduce((a, b) => a + b.count, 0)).toBe(X.length);
  expect(bins[0].from).toBe(1.9);
  expect(bins[bins.length - 1].to).toBeCloseTo(7.9, 10);
});
