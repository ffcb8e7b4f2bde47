import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { clarke, inverseClarke, inversePark, park, sixStepVectors } from './clarke-park';
import { CROSSING_ANGLE_DEG } from './angle-fit';
import { IDEAL_SIX_STEP_BOUNDARIES_DEG, sixStepTorque } from './drive-impact';

const RAD = Math.PI / 180;
const angle = fc.double({ min: -720, max: 720, noNaN: true });
const amp = fc.double({ min: -100, max: 100, noNaN: true });

describe('Clarke and Park transforms (textbook machine theory, e.g. Krause et al., Analysis of Electric Machinery and Drive Systems)', () => {
  it('turns balanced currents −I·sin(θ − φ) into id = 0 and iq = I at every angle', () => {
    fc.assert(
      fc.property(angle, fc.double({ min: 0.01, max: 100, noNaN: true }), (theta, I) => {
        const ia = -I * Math.sin(theta * RAD);
        const ib = -I * Math.sin((theta - 120) * RAD);
        const ic = -I * Math.sin((theta + 120) * RAD);
        const ab = clarke(ia, ib, ic);
        const dq = park(ab.alpha, ab.beta, theta);
        expect(dq.d).toBeCloseTo(0, 9);
        expect(dq.q).toBeCloseTo(I, 9);
      }),
      { numRuns: 200 },
    );
  });

  it('inverts exactly: inverse Park ∘ Park and inverse Clarke ∘ Clarke are identities', () => {
    fc.assert(
      fc.property(amp, amp, angle, (a, b, theta) => {
        const c = -a - b;
        const ab = clarke(a, b, c);
        const back = inverseClarke(ab.alpha, ab.beta);
        expect(back.a).toBeCloseTo(a, 9);
        expect(back.b).toBeCloseTo(b, 9);
        expect(back.c).toBeCloseTo(c, 9);
        const dq = park(ab.alpha, ab.beta, theta);
        const ab2 = inversePark(dq.d, dq.q, theta);
        expect(ab2.alpha).toBeCloseTo(ab.alpha, 9);
        expect(ab2.beta).toBeCloseTo(ab.beta, 9);
        // Park is a rotation: it keeps the vector length.
        expect(Math.hypot(dq.d, dq.q)).toBeCloseTo(Math.hypot(ab.alpha, ab.beta), 9);
      }),
      { numRuns: 200 },
    );
  });

  it('puts the six two-phase current vectors 60° apart at 30° + k·60°, each 2/√3 long', () => {
    const v = sixStepVectors();
    expect(v).toHaveLength(6);
    const angles = v.map((x) => x.angleDeg).sort((a, b) => a - b);
    expect(angles).toEqual([30, 90, 150, 210, 270, 330]);
    for (const x of v) expect(x.magnitude).toBeCloseTo(2 / Math.sqrt(3), 12);
    // A→B conduction (ia = 1, ib = −1): α = 1, β = −1/√3, i.e. −30°.
    const ab = v.find((x) => x.from === 'A' && x.to === 'B')!;
    expect(ab.angleDeg).toBe(330);
  });

  it('makes the one-plus-two-in-parallel stator vector about 15 % longer than the two-phase one', () => {
    // Common practice, no source: two 0.5 Ω phases in series = 1 Ω (1 A at 1 V); one phase in series with
    // the other two in parallel = 0.75 Ω (1.33 A, 33 % more); its vector is 4/3 against 2/√3 (≈ 15 % longer).
    const R = 0.5;
    const series = R + R;
    const starParallel = R + (R * R) / (R + R);
    expect(series).toBe(1);
    expect(starParallel).toBe(0.75);
    const iTwo = 1 / series;
    const iThree = 1 / starParallel;
    expect(iThree / iTwo - 1).toBeCloseTo(1 / 3, 12);
    const two = clarke(iTwo, -iTwo, 0);
    const three = clarke(iThree, -iThree / 2, -iThree / 2);
    expect(Math.hypot(two.alpha, two.beta)).toBeCloseTo(2 / Math.sqrt(3), 12);
    expect(Math.hypot(three.alpha, three.beta)).toBeCloseTo(4 / 3, 12);
    expect(Math.hypot(three.alpha, three.beta) / Math.hypot(two.alpha, two.beta) - 1).toBeCloseTo(0.1547, 4);
  });
});

describe('back-EMF crossing table (domain contract, derived from λx = ψ·cos(θ − φx))', () => {
  // Numerical check of the table against the flux model: vx ∝ −dθ/dt·sin(θ − φx), line = difference.
  const phase = { A: 0, B: 120, C: 240 } as const;
  const v = (ch: keyof typeof CROSSING_ANGLE_DEG, theta: number, speed: number) => {
    const p = (x: 'A' | 'B' | 'C') => -speed * Math.sin((theta - phase[x]) * RAD);
    if (ch.length === 1) return p(ch as 'A' | 'B' | 'C');
    return p(ch[0] as 'A' | 'B' | 'C') - p(ch[1] as 'A' | 'B' | 'C');
  };
  for (const ch of Object.keys(CROSSING_ANGLE_DEG) as (keyof typeof CROSSING_ANGLE_DEG)[]) {
    it(`places channel ${ch} crossings where its voltage changes sign, rising the same way in both directions`, () => {
      for (const edge of ['rise', 'fall'] as const) {
        const a = CROSSING_ANGLE_DEG[ch][edge];
        expect(Math.abs(v(ch, a, 1))).toBeLessThan(1e-9);
        // Forward: θ increases with time; reverse: θ decreases, and the speed term flips sign.
        const fwdBefore = v(ch, a - 1, 1);
        const fwdAfter = v(ch, a + 1, 1);
        const revBefore = v(ch, a + 1, -1);
        const revAfter = v(ch, a - 1, -1);
        const up = edge === 'rise';
        expect(fwdAfter > fwdBefore).toBe(up);
        expect(revAfter > revBefore).toBe(up);
      }
    });
  }
});

describe('six-step torque ripple', () => {
  it('is 1 − cos 30° of the peak (14.0 % of the mean) with ideal boundaries', () => {
    // Common practice, no source: ideal six-step with sinusoidal back-EMF ripples between cos 30° and 1.
    const ideal = sixStepTorque(IDEAL_SIX_STEP_BOUNDARIES_DEG);
    const peak = 2 / Math.sqrt(3);
    const mean = peak * (3 / Math.PI);
    expect(ideal.meanTorque).toBeCloseTo(mean, 9);
    expect(ideal.ripplePct).toBeCloseTo((100 * peak * (1 - Math.cos(30 * RAD))) / mean, 6);
  });

  it('grows and loses mean torque as cos δ when every boundary is shifted by δ', () => {
    const delta = 10;
    const shifted = sixStepTorque(IDEAL_SIX_STEP_BOUNDARIES_DEG.map((b) => b + delta));
    const ideal = sixStepTorque(IDEAL_SIX_STEP_BOUNDARIES_DEG);
    expect(shifted.meanTorque / ideal.meanTorque).toBeCloseTo(Math.cos(delta * RAD), 9);
    // Extremes move to cos(30° + δ) and the peak 1: ripple = (1 − cos 40°) / mean.
    expect(shifted.ripplePct).toBeCloseTo(
      (100 * (2 / Math.sqrt(3)) * (1 - Math.cos(40 * RAD))) / shifted.meanTorque,
      6,
    );
  });
});
