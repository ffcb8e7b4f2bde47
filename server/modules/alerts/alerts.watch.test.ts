import { describe, expect, it } from 'vitest';
import {
  alreadySeen,
  BASELINE_POINTS,
  initialWatchState,
  watchStep,
  type WatchSettings,
} from './alerts.watch';
import { evaluateRules } from '#shared/statistics';

const imr: WatchSettings = {
  kind: 'imr',
  ruleSet: 'western-electric',
  rules: [1, 2, 3, 4],
  lambda: 0.2,
  limitWidth: 3,
};
const ewma: WatchSettings = { ...imr, kind: 'ewma' };

/** A steady sequence with σ about 1 (alternating ±1 around 0 gives MR̄ = 2 → σ = 2/d2 ≈ 1.77). */
function point(i: number, value: number) {
  return {
    serial: `SN-${i}`,
    unitId: `u${i}`,
    calibrationId: `c${i}`,
    value,
    at: new Date(Date.UTC(2026, 10, 5, 0, i)).toISOString(),
  };
}

function run(settings: WatchSettings, values: number[]) {
  let state = initialWatchState();
  const hits: { rule: number; at: number; serials: string[] }[] = [];
  values.forEach((v, i) => {
    const r = watchStep(JSON.parse(JSON.stringify(state)), settings, point(i, v));
    state = r.state;
    for (const h of r.hits) hits.push({ rule: h.rule, at: i, serials: h.points.map((p) => p.serial) });
  });
  return { state, hits };
}

const steady = Array.from({ length: BASELINE_POINTS }, (_, i) => (i % 2 ? 1 : -1));

describe('watching a chart after each calibration', () => {
  it('fixes the limits from the first points and judges nothing before', () => {
    const { state, hits } = run(imr, steady);
    expect(hits).toEqual([]);
    expect(state.baseline!.center).toBeCloseTo(0, 10);
    // σ within = MR̄ / d2(2) with MR̄ = 2 and d2(2) = 2/√π (textbook result).
    expect(state.baseline!.sigma).toBeCloseTo(2 / (2 / Math.sqrt(Math.PI)), 4);
  });

  it('raises Western Electric rule 4 on eight points on one side and names the eight units', () => {
    const { hits } = run(imr, [...steady, 0.5, 0.4, 0.6, 0.3, 0.2, 0.5, 0.4, 0.6]);
    const rule4 = hits.filter((h) => h.rule === 4);
    expect(rule4).toHaveLength(1);
    expect(rule4[0].serials).toEqual(Array.from({ length: 8 }, (_, i) => `SN-${BASELINE_POINTS + i}`));
  });

  it('judges point by point exactly as the whole-series rules do, keeping a bounded state', () => {
    const later = Array.from({ length: 300 }, (_, i) => Math.sin(i / 5) * 4 + (i % 11 === 0 ? 2 : 0));
    const { state, hits } = run(imr, [...steady, ...later]);
    const sigma = state.baseline!.sigma;
    const whole = evaluateRules(
      later.map((v, i) => ({ index: i, value: v, z: v / sigma })),
      'western-electric',
    );
    expect(hits.map((h) => [h.rule, h.at - BASELINE_POINTS])).toEqual(whole.map((h) => [h.rule, h.index]));
    expect(JSON.stringify(state).length).toBeLessThan(10_000);
  });

  it('raises the low EWMA rule on a slow downward drift that no single point shows', () => {
    // A drift of −0.02 σ per point: after 100 points the mean is 2 σ low, no point beyond 3 σ.
    const drift = Array.from({ length: 100 }, (_, i) => (i % 2 ? 1 : -1) * 0.5 - 0.02 * 1.77 * i);
    const ew = run(ewma, [...steady, ...drift]);
    expect(ew.hits.some((h) => h.rule === 2)).toBe(true);
    expect(ew.hits.some((h) => h.rule === 1)).toBe(false);
    const ind = run({ ...imr, rules: [1] }, [...steady, ...drift]);
    expect(ind.hits).toEqual([]);
  });

  it('recognises a calibration it has already taken in', () => {
    const { state } = run(imr, [...steady, 0.1, 0.2]);
    expect(alreadySeen(state, `c${BASELINE_POINTS + 1}`)).toBe(true);
    expect(alreadySeen(state, 'c-new')).toBe(false);
  });
});

describe('watching with frozen limits and subgroups', () => {
  const frozen = { id: 'limits-v1', center: 10, sigma: 1 };

  it('judges from the first point against frozen limits, without collecting a baseline of its own', () => {
    const { hits, state } = run({ ...imr, frozen }, [10, 10.2, 14]);
    expect(state.baseline).toBeNull();
    expect(hits).toEqual([{ rule: 1, at: 2, serials: ['SN-2'] }]);
  });

  it('starts the run rules again when the frozen limits change or are cleared', () => {
    let state = initialWatchState();
    const step = (settings: WatchSettings, i: number, v: number) => {
      const r = watchStep(state, settings, point(i, v));
      state = r.state;
      return r.hits.map((h) => h.rule);
    };
    for (let i = 0; i < 7; i++) step({ ...imr, frozen }, i, 10.5);
    expect(state.count).toBe(7);
    // New limits: the seven points above the old centre do not count towards rule 4 any more.
    expect(step({ ...imr, frozen: { id: 'limits-v2', center: 10, sigma: 1 } }, 7, 10.5)).toEqual([]);
    expect(state.count).toBe(1);
    expect(state.limitsId).toBe('limits-v2');
    // Cleared, and no baseline of its own yet: it collects again.
    step({ ...imr, frozen: null }, 8, 10.5);
    expect(state.limitsId).toBeNull();
    expect(state.warmup).toHaveLength(1);
  });

  it('X̄-R: judges each full subgroup once, names every unit of it, and flags a range beyond D4·d2·σ', () => {
    const xbar: WatchSettings = { ...imr, kind: 'xbar-r', subgroupSize: 4, frozen };
    // Subgroup 1 steady; subgroup 2 has its mean 2σ/√4·… far out: mean 12 > 10 + 3·1/√4 = 11.5 (rule 1).
    // Subgroup 3: range 6 > D4·d2·σ = 2.282·2.059·1 ≈ 4.70 (Montgomery, Appendix VI, n = 4).
    const { hits, state } = run(xbar, [10, 10.5, 9.5, 10, 12, 12, 12, 12, 7, 13, 10, 10, 10]);
    expect(hits.map((h) => h.rule)).toEqual([1, 0]);
    expect(hits[0]).toMatchObject({ at: 7, serials: ['SN-4', 'SN-5', 'SN-6', 'SN-7'] });
    expect(hits[1]).toMatchObject({ at: 11, serials: ['SN-8', 'SN-9', 'SN-10', 'SN-11'] });
    expect(state.count).toBe(3);
    expect(state.subgroup).toHaveLength(1);
  });
});
