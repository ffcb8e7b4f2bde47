import { describe, expect, it } from 'vitest';
import { circularMeanDeg, circularSummary, wrapDeg180, wrapDeg360 } from './angles';

describe('circular statistics', () => {
  it('averages 350°, 10° and 20° to 6.705°, not the arithmetic 126.7°', () => {
    // Mardia & Jupp, Directional Statistics (2000), §2.2.1: mean direction = atan2(Σ sin, Σ cos).
    expect(circularMeanDeg([350, 10, 20])).toBeCloseTo(6.705, 3);
  });

  it('gives the mean resultant length and circular standard deviation of Mardia & Jupp', () => {
    // Mardia & Jupp §2.3.4: circular standard deviation = √(−2 ln R̄). For ±10° around 0: R̄ = cos 10°.
    const s = circularSummary([-10, 10]);
    expect(s.resultant).toBeCloseTo(Math.cos((10 * Math.PI) / 180), 12);
    expect(s.stdDeg).toBeCloseTo(
      (Math.sqrt(-2 * Math.log(Math.cos((10 * Math.PI) / 180))) * 180) / Math.PI,
      9,
    );
  });

  it('has no mean direction for opposite angles', () => {
    expect(circularMeanDeg([0, 180])).toBeNull();
    expect(circularMeanDeg([])).toBeNull();
  });

  it('wraps angles into (−180, 180] and [0, 360)', () => {
    expect(wrapDeg180(180)).toBe(180);
    expect(wrapDeg180(-180)).toBe(180);
    expect(wrapDeg180(190)).toBeCloseTo(-170, 12);
    expect(wrapDeg180(-725)).toBeCloseTo(-5, 12);
    expect(wrapDeg360(-10)).toBeCloseTo(350, 12);
    expect(wrapDeg360(720)).toBe(0);
  });
});
