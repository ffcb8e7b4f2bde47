import { describe, expect, it } from 'vitest';
import { sparseLine } from './plot-lines';

/** The y of the line through the kept points at index i (linear between neighbours, as spanGaps draws it). */
function drawnAt(kept: (number | null)[], i: number): number {
  if (kept[i] != null) return kept[i];
  let a = i;
  while (kept[a] == null) a -= 1;
  let b = i;
  while (kept[b] == null) b += 1;
  return kept[a]! + ((kept[b]! - kept[a]!) * (i - a)) / (b - a);
}

describe('a control limit drawn from its corners only', () => {
  it('keeps two points of a limit that never changes', () => {
    const kept = sparseLine(Array.from({ length: 10_000 }, () => 3.21));
    expect(kept.filter((v) => v != null)).toHaveLength(2);
    expect(kept[0]).toBe(3.21);
    expect(kept[9_999]).toBe(3.21);
  });

  it('draws the same line as every point for limits that step and widen (EWMA start, subgroup sizes)', () => {
    const limits = [1, 1.5, 1.8, 2, 2, 2, 2, 2.4, 2.4, 2, 2, 2];
    const kept = sparseLine(limits);
    expect(kept.filter((v) => v != null).length).toBeLessThan(limits.length);
    limits.forEach((v, i) => expect(drawnAt(kept, i)).toBeCloseTo(v, 12));
  });

  it('keeps a single point and an empty chart as they are', () => {
    expect(sparseLine([4])).toEqual([4]);
    expect(sparseLine([])).toEqual([]);
  });
});
