import { describe, expect, it } from 'vitest';
import { createRng } from '../simulation/rng';
import {
  averageRangeConstants,
  certifiedValue,
  gaugeAnova,
  gaugeAverageRange,
  readGauge,
  twoWayAnova,
  type GaugeData,
} from './gauge-study';

// Battery life (hours) by material type (rows here "parts") and temperature 15/70/125 °F (columns here
// "appraisers"), 4 replicates: Montgomery, Design and Analysis of Experiments, Example 5.1 (Table 5.1).
// Values from memory; the sums of squares below reproduce the book's ANOVA table (Table 5.5), which is
// itself a check that the data are the book's.
const BATTERY: GaugeData = [
  [
    [130, 155, 74, 180],
    [34, 40, 80, 75],
    [20, 70, 82, 58],
  ],
  [
    [150, 188, 159, 126],
    [136, 122, 106, 115],
    [25, 70, 58, 45],
  ],
  [
    [138, 110, 168, 160],
    [174, 120, 150, 139],
    [96, 104, 82, 60],
  ],
];

describe('two-way ANOVA with interaction', () => {
  const a = twoWayAnova(BATTERY);
  // Montgomery, Design and Analysis of Experiments, Table 5.5 (from memory): SS material 10,683.72 (2 df),
  // temperature 39,118.72 (2 df), interaction 9,613.78 (4 df), error 18,230.75 (27 df), total 77,646.97 (35 df);
  // F 7.91, 28.97, 3.56; P 0.0020, < 0.0001, 0.0186.
  it('reproduces the textbook sums of squares, degrees of freedom and F tests', () => {
    expect(a.rows.parts.ss).toBeCloseTo(10683.72, 1);
    expect(a.rows.appraisers.ss).toBeCloseTo(39118.72, 1);
    expect(a.rows.interaction.ss).toBeCloseTo(9613.78, 1);
    expect(a.rows.repeatability.ss).toBeCloseTo(18230.75, 1);
    expect(a.rows.total.ss).toBeCloseTo(77646.97, 1);
    expect([
      a.rows.parts.df,
      a.rows.appraisers.df,
      a.rows.interaction.df,
      a.rows.repeatability.df,
      a.rows.total.df,
    ]).toEqual([2, 2, 4, 27, 35]);
    expect(a.rows.parts.f).toBeCloseTo(7.91, 2);
    expect(a.rows.appraisers.f).toBeCloseTo(28.97, 2);
    expect(a.rows.interaction.f).toBeCloseTo(3.56, 2);
    expect(a.rows.parts.p).toBeCloseTo(0.002, 4);
    expect(a.rows.appraisers.p!).toBeLessThan(0.0001);
    expect(a.rows.interaction.p).toBeCloseTo(0.0186, 4);
  });

  it('refuses an unbalanced or too small design in plain words', () => {
    expect(() => twoWayAnova([[[1, 2]], [[1, 2]]])).toThrow(/at least 2 parts, 2 appraisers and 2 trials/);
    expect(() =>
      twoWayAnova([
        [
          [1, 2],
          [1, 2],
        ],
        [[1, 2], [1]],
      ]),
    ).toThrow(/same number of trials/);
  });
});

describe('gauge study by the ANOVA method', () => {
  it('keeps a significant interaction and takes the components from the random-effects mean squares', () => {
    const g = gaugeAnova(BATTERY, { tolerance: 300 });
    // Interaction p = 0.0186 < 0.25: not pooled. Components from Montgomery's mean squares (Table 5.5,
    // from memory) with the random-effects expected mean squares (Montgomery, Introduction to Statistical
    // Quality Control, gauge R&R): MS_E 675.21, MS_AB 2403.44, MS_A 5341.86, MS_B 19559.36, n = 4, a = b = 3.
    expect(g.interactionPooled).toBe(false);
    expect(g.variance.repeatability).toBeCloseTo(675.21, 1);
    expect(g.variance.interaction).toBeCloseTo((2403.44 - 675.21) / 4, 1);
    expect(g.variance.appraisers).toBeCloseTo((19559.36 - 2403.44) / 12, 1);
    expect(g.variance.parts).toBeCloseTo((5341.86 - 2403.44) / 12, 1);
    // Random effects: main effects against the interaction, F = 5341.86 / 2403.44 = 2.22 on (2, 4) df.
    expect(g.table[0].f).toBeCloseTo(5341.86 / 2403.44, 2);
    expect(g.table[0].df).toBe(2);
    const grr = Math.sqrt(675.21 + (2403.44 - 675.21) / 4 + (19559.36 - 2403.44) / 12);
    expect(g.grr).toBeCloseTo(grr, 1);
    expect(g.percentOfTv.grr).toBeCloseTo((100 * grr) / Math.sqrt(grr ** 2 + (5341.86 - 2403.44) / 12), 1);
    expect(g.percentOfTolerance!.grr).toBeCloseTo((600 * grr) / 300, 1);
    expect(g.ndc).toBe(Math.floor((1.41 * Math.sqrt((5341.86 - 2403.44) / 12)) / grr));
  });

  it('pools an interaction whose p exceeds 0.25 into repeatability', () => {
    // No interaction by construction: part effect + appraiser effect + a small symmetric trial pattern.
    const data: GaugeData = [0, 1, 2, 3].map((i) =>
      [0, 0.5].map((b) => [-0.1, 0.1].map((e, k) => i + b + e * (1 + ((i + k) % 2)))),
    );
    const g = gaugeAnova(data);
    expect(g.interactionP).toBeGreaterThan(0.25);
    expect(g.interactionPooled).toBe(true);
    expect(g.interaction).toBe(0);
    const a = twoWayAnova(data);
    expect(g.table[2].df).toBe(a.rows.interaction.df + a.rows.repeatability.df);
    expect(g.variance.repeatability).toBeCloseTo(
      (a.rows.interaction.ss + a.rows.repeatability.ss) / (a.rows.interaction.df + a.rows.repeatability.df),
      12,
    );
  });

  it('recovers the spread a simulated measurement system was given', () => {
    // Common practice, no source: a large simulated study with known components (part 1.0°, appraiser
    // 0.10°, repeatability 0.05°) estimates them within sampling error.
    const rng = createRng(42);
    const parts = Array.from({ length: 25 }, () => rng.normal() * 1.0);
    const appraisers = Array.from({ length: 6 }, () => rng.normal() * 0.1);
    const data = parts.map((p) => appraisers.map((a) => [0, 1, 2, 3].map(() => p + a + rng.normal() * 0.05)));
    const g = gaugeAnova(data);
    expect(g.ev).toBeGreaterThan(0.045);
    expect(g.ev).toBeLessThan(0.055);
    expect(g.pv).toBeGreaterThan(0.7);
    expect(g.pv).toBeLessThan(1.3);
    const r = gaugeAverageRange(data);
    expect(Math.abs(r.ev - g.ev) / g.ev).toBeLessThan(0.08);
  });
});

describe('gauge study by the average-and-range method', () => {
  it('derives K1, K2 and K3 from d2 and d2* as the AIAG tables give them', () => {
    // AIAG MSA 4th ed., average-and-range worksheet (from memory): K1 0.8862 (2 trials), 0.5908 (3 trials);
    // K2 0.7071 (2 appraisers), 0.5231 (3 appraisers); K3 0.7071, 0.5231, 0.4467, 0.4030, 0.3742, 0.3534,
    // 0.3375, 0.3249, 0.3146 for 2 … 10 parts.
    expect(averageRangeConstants(2, 2, 2).k1).toBeCloseTo(0.8862, 3);
    expect(averageRangeConstants(3, 3, 2).k1).toBeCloseTo(0.5908, 3);
    expect(averageRangeConstants(3, 2, 2).k2).toBeCloseTo(0.7071, 3);
    expect(averageRangeConstants(3, 3, 2).k2).toBeCloseTo(0.5231, 3);
    const k3 = [0.7071, 0.5231, 0.4467, 0.403, 0.3742, 0.3534, 0.3375, 0.3249, 0.3146];
    k3.forEach((k, i) => expect(averageRangeConstants(3, 3, i + 2).k3, `${i + 2} parts`).toBeCloseTo(k, 3));
  });

  it('computes EV, AV and PV from the ranges and means', () => {
    const g = gaugeAverageRange(BATTERY);
    // Hand reckoning on the battery data (common practice, no source): ranges per cell, averaged per
    // column then over columns; column means; row means.
    const ranges = [
      [106, 46, 62],
      [62, 30, 45],
      [58, 54, 44],
    ];
    const rbar = ranges.flat().reduce((a, b) => a + b, 0) / 9;
    expect(g.averageRange).toBeCloseTo(rbar, 10);
    const k = averageRangeConstants(4, 3, 3);
    expect(g.ev).toBeCloseTo(rbar * k.k1, 10);
    // Row (material) means 83.17, 108.33, 125.08; column (temperature) means 144.83, 107.58, 64.17.
    expect(g.partRange).toBeCloseTo(125.083 - 83.167, 2);
    expect(g.appraiserDiff).toBeCloseTo(144.833 - 64.167, 2);
  });
});

describe('reading a gauge study', () => {
  it('reads under 10 % acceptable, 10–30 % perhaps, over 30 % not (AIAG MSA 4th ed., from memory)', () => {
    expect(readGauge(8, 7).reading).toBe('acceptable');
    expect(readGauge(8, 3).reading).toBe('marginal');
    expect(readGauge(22, 6).reading).toBe('marginal');
    expect(readGauge(31, 6).reading).toBe('unacceptable');
    expect(readGauge(31, 2).sentence).toMatch(/not acceptable: GRR is 31.0 % and it tells only 2 categories/);
  });
});

describe('certified value of a reference unit', () => {
  it('is the mean with an expanded uncertainty of 2 s/√n', () => {
    // GUM (JCGM 100:2008) type A evaluation, k = 2: values 1, 2, 3, 4 → mean 2.5, s = 1.291, U = 1.291.
    const c = certifiedValue([1, 2, 3, 4]);
    expect(c.mean).toBe(2.5);
    expect(c.sd).toBeCloseTo(1.291, 4);
    expect(c.expandedUncertainty).toBeCloseTo(1.291, 4);
    expect(() => certifiedValue([1])).toThrow(/at least 2/);
  });
});
