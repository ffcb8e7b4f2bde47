import { expect, it } from 'vitest';
import { chartConstants } from './constants';

// Montgomery, Introduction to Statistical Quality Control, Appendix VI (same values as ASTM E2587, table 1).
const TABLE: Record<
  number,
  Partial<Record<'A2' | 'A3' | 'c4' | 'B3' | 'B4' | 'd2' | 'D3' | 'D4', number>>
> = {
  2: { A2: 1.88, A3: 2.659, c4: 0.7979, B3: 0, B4: 3.267, d2: 1.128, D3: 0, D4: 3.267 },
  5: { A2: 0.577, A3: 1.427, c4: 0.94, B3: 0, B4: 2.089, d2: 2.326, D3: 0, D4: 2.114 },
  6: { A2: 0.483, A3: 1.287, c4: 0.9515, B3: 0.03, B4: 1.97, d2: 2.534, D3: 0, D4: 2.004 },
  7: { A2: 0.419, A3: 1.182, c4: 0.9594, B3: 0.118, B4: 1.882, d2: 2.704, D3: 0.076, D4: 1.924 },
  10: { A2: 0.308, A3: 0.975, c4: 0.9727, B3: 0.284, B4: 1.716, d2: 3.078, D3: 0.223, D4: 1.777 },
  25: { A2: 0.153, A3: 0.606, c4: 0.9896, B3: 0.565, B4: 1.435, d2: 3.931, D3: 0.459, D4: 1.541 },
};

it('matches the published control-chart constants to the table’s three decimals', () => {
  for (const [n, row] of Object.entries(TABLE)) {
    const k = chartConstants(Number(n));
    for (const [name, value] of Object.entries(row)) {
      const digits = name === 'c4' ? 4 : 3;
      expect(Math.abs(k[name as keyof typeof k] - value!), `${name} for n = ${n}`).toBeLessThanOrEqual(
        0.6 * 10 ** -digits,
      );
    }
  }
});

it('refuses a subgroup size outside 2 to 25', () => {
  expect(() => chartConstants(1)).toThrow(/between 2 and 25/);
  expect(() => chartConstants(26)).toThrow(/between 2 and 25/);
});
