import { describe as group, expect, it } from 'vitest';
import { evaluateRules, createRuleState, pushRulePoint, type RuleSet } from './rules';

// Constructed sequences on a chart with centre 0 and σ 1 (so z = value). Rules as written in the Western
// Electric Statistical Quality Control Handbook (1956) and Nelson, J. Quality Technology 16(4), 1984.
function fired(zs: number[], set: RuleSet, rule: number): number[] {
  return evaluateRules(
    zs.map((z, index) => ({ index, value: z, z })),
    set,
    [rule],
  ).map((h) => h.index);
}

group('Western Electric rules', () => {
  it('rule 1 fires on a point beyond 3σ, not on one at exactly 3σ', () => {
    expect(fired([0.1, 3.2, -0.2], 'western-electric', 1)).toEqual([1]);
    expect(fired([0.1, 3, -3], 'western-electric', 1)).toEqual([]);
  });
  it('rule 2 fires on two of three beyond 2σ on one side, not when they are on opposite sides', () => {
    expect(fired([0, 2.1, 0.5, 2.3], 'western-electric', 2)).toEqual([3]);
    expect(fired([0, 2.1, -0.5, -2.3], 'western-electric', 2)).toEqual([]);
    expect(fired([2.1, 0, 0, 2.3], 'western-electric', 2)).toEqual([]);
  });
  it('rule 3 fires on four of five beyond 1σ on one side, not on three of five', () => {
    expect(fired([1.1, 1.2, 0.2, 1.5, 1.3], 'western-electric', 3)).toEqual([4]);
    expect(fired([1.1, 0.9, 0.2, 1.5, 1.3], 'western-electric', 3)).toEqual([]);
  });
  it('rule 4 fires on eight in a row on one side, not on seven', () => {
    expect(fired([-0.5, 0.1, 0.2, 0.3, 0.1, 0.4, 0.2, 0.6, 0.1], 'western-electric', 4)).toEqual([8]);
    expect(fired([-0.5, 0.1, 0.2, 0.3, 0.1, 0.4, 0.2, 0.6, -0.1], 'western-electric', 4)).toEqual([]);
  });
});

group('Nelson rules', () => {
  it('rule 2 fires on nine in a row on one side, not on eight', () => {
    const nine = [-0.3, 0.2, 0.4, 0.1, 0.6, 0.3, 0.2, 0.5, 0.1, 0.2];
    expect(fired(nine, 'nelson', 2)).toEqual([9]);
    expect(fired([...nine.slice(0, 9), -0.2], 'nelson', 2)).toEqual([]);
  });
  it('rule 3 fires on six points steadily increasing, not when one tie breaks the run', () => {
    expect(fired([0, -1, -0.5, 0, 0.3, 0.6, 0.9], 'nelson', 3)).toEqual([6]);
    expect(fired([0, -1, -0.5, 0, 0, 0.6, 0.9], 'nelson', 3)).toEqual([]);
    expect(fired([1, 0.8, 0.5, 0.1, -0.2, -0.4], 'nelson', 3)).toEqual([5]);
  });
  it('rule 4 fires on fourteen points alternating up and down, not on thirteen', () => {
    const alt = Array.from({ length: 14 }, (_, i) => (i % 2 === 0 ? 0.5 : -0.5));
    expect(fired(alt, 'nelson', 4)).toEqual([13]);
    expect(fired(alt.slice(0, 13), 'nelson', 4)).toEqual([]);
  });
  it('rule 5 and rule 6 are the two-of-three and four-of-five zone rules', () => {
    expect(fired([-2.1, -0.3, -2.5], 'nelson', 5)).toEqual([2]);
    expect(fired([-2.1, -0.3, -1.9], 'nelson', 5)).toEqual([]);
    expect(fired([-1.1, -1.2, -1.3, 0.2, -1.5], 'nelson', 6)).toEqual([4]);
    expect(fired([-1.1, -1.2, 1.3, 0.2, -1.5], 'nelson', 6)).toEqual([]);
  });
  it('rule 7 fires on fifteen points within 1σ on both sides, not when one point reaches 1σ', () => {
    const calm = Array.from({ length: 15 }, (_, i) => (i % 3 === 0 ? 0.4 : -0.3));
    expect(fired(calm, 'nelson', 7)).toEqual([14]);
    expect(fired([...calm.slice(0, 7), 1.0, ...calm.slice(8)], 'nelson', 7)).toEqual([]);
  });
  it('rule 8 fires on eight points beyond 1σ on either side, not when one falls inside', () => {
    const wide = [1.5, -1.2, 1.8, -1.4, 1.1, -1.6, 1.3, -1.9];
    expect(fired(wide, 'nelson', 8)).toEqual([7]);
    expect(fired([...wide.slice(0, 4), 0.9, ...wide.slice(5)], 'nelson', 8)).toEqual([]);
  });
  it('reports every point involved in a run', () => {
    const hits = evaluateRules(
      [0, 2.1, 0.5, 2.3].map((z, index) => ({ index, value: z, z })),
      'nelson',
      [5],
    );
    expect(hits).toEqual([{ rule: 5, index: 3, involved: [1, 3] }]);
  });
});

it('gives the same hits point by point as over the whole series, keeping only fifteen points', () => {
  const zs = Array.from({ length: 200 }, (_, i) => Math.sin(i / 3) * 2.5 + (i % 7 === 0 ? 1.2 : 0));
  const points = zs.map((z, index) => ({ index, value: z, z }));
  const whole = evaluateRules(points, 'nelson');
  // The state is stored between calibrations, so it goes through JSON at every step.
  let stored = JSON.stringify(createRuleState());
  const incremental = points.flatMap((p) => {
    const state = JSON.parse(stored);
    const h = pushRulePoint(state, p, 'nelson');
    expect(state.recent.length).toBeLessThanOrEqual(15);
    stored = JSON.stringify(state);
    return h;
  });
  expect(incremental).toEqual(whole);
  expect(whole.length).toBeGreaterThan(0);
});
