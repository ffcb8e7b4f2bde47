import FFT from 'fft.js';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { Recipe } from '../schemas/recipe';
import { calibrationResultSchema } from '../schemas/calibration-result';
import { CalibrationInputError } from '../calibration/input';
import { wrapDeg180 } from '../calibration/angles';
import { createRng } from '../simulation/rng';
import { simulateCapture, type CaptureSimSpec } from '../simulation/capture-sim';
import { calibrateCapture } from './capture';

const recipe: Recipe = {
  polePairs: 4,
  hallRiseDeg: { A: 30, B: 150, C: 270 },
  bemfDelayUs: 7,
  debounceUs: 1,
  countsPerTurn: 65536,
  countsSigned: true,
  maxAttempts: 3,
  limits: {
    offsetDeg: [-20, 20],
    edgeResidualDeg: 2,
    speedRpm: [500, 5000],
    minElectricalRevs: 10,
    keVPerKrpm: [5, 7],
  },
};

const spec = (over: Partial<CaptureSimSpec> = {}): CaptureSimSpec => ({
  polePairs: 4,
  hallRiseDeg: recipe.hallRiseDeg,
  offsetDeg: -6.4,
  direction: 'forward',
  profile: { kind: 'coast', startRpm: 3000, endRpm: 2000 },
  electricalTurns: 14,
  keVPerKrpm: 6,
  harmonics: { 5: 0.04, 7: 0.02 },
  sampleRateHz: 200_000,
  noiseV: 0.02,
  commonModeV: 2,
  channels: 'phase',
  hallHighV: 5,
  ...over,
});

describe('sampled captures end to end', () => {
  it('recovers offset, Ke and THD from a noisy phase-voltage capture while coasting down', () => {
    const cap = simulateCapture(spec(), createRng(5));
    const { result } = calibrateCapture(cap.csv, recipe);
    expect(calibrationResultSchema.safeParse(result).success).toBe(true);
    expect(Math.abs(wrapDeg180(result.offsetDeg! - cap.truth.segments[0].offsetDeg))).toBeLessThan(0.02);
    expect(result.capture?.keVPerKrpmPeak).toBeCloseTo(6, 1);
    expect(result.capture?.keVPerKrpmRms).toBeCloseTo(6 / Math.SQRT2, 1);
    for (const thd of result.capture!.thdPct) expect(thd).toBeCloseTo(100 * Math.hypot(0.04, 0.02), 0);
    expect(result.capture!.amplitudeImbalancePct).toBeLessThan(0.5);
    expect(result.checks.find((c) => c.code === 'capture.ke_within_limits')?.passed).toBe(true);
    expect(result.verdict).toBe('pass');
  });

  it('reads line-to-line captures in reverse and in another column order', () => {
    const cap = simulateCapture(
      // 2437 rpm is not a sub-multiple of the sample rate, so the half-sample placement of hall edges
      // averages out; at 2500 rpm (1200 samples per turn) every edge would land at the same grid phase.
      spec({ channels: 'line', direction: 'reverse', profile: { kind: 'constant', speedRpm: 2437 } }),
      createRng(6),
    );
    const lines = cap.csv
      .trim()
      .split('\n')
      .map((l) => l.split(','));
    const order = [4, 0, 6, 2, 1, 5, 3];
    const shuffled = lines.map((f) => order.map((i) => f[i]).join(',')).join('\n');
    const { result, measurement } = calibrateCapture(shuffled, recipe);
    expect(measurement.segments[0].direction).toBe('reverse');
    expect(Math.abs(wrapDeg180(result.offsetDeg! - cap.truth.segments[0].offsetDeg))).toBeLessThan(0.02);
    expect(result.capture!.channels).toBe('line');
    expect(result.capture!.keVPerKrpmPeak).toBeCloseTo(6, 1);
  });

  it('shows a weak phase as amplitude imbalance and a larger crossing residual', () => {
    const weak = calibrateCapture(
      simulateCapture(spec({ phaseGain: { B: 0.9 } }), createRng(9)).csv,
      recipe,
    ).result;
    const even = calibrateCapture(simulateCapture(spec(), createRng(9)).csv, recipe).result;
    // Amplitudes 1, 0.9, 1 about their virtual neutral: imbalance near 10 %.
    expect(weak.capture!.amplitudeImbalancePct).toBeGreaterThan(5);
    expect(even.capture!.amplitudeImbalancePct).toBeLessThan(0.5);
    expect(weak.fitResidualDeg).toBeGreaterThan(3 * even.fitResidualDeg);
  });

  it('measures the same THD as fft.js on the raw samples of a constant-speed capture', () => {
    // 1 turn per 2048 samples exactly: fe = fs / 2048, so a plain FFT of the samples is coherent.
    const fs = 2048 * 100;
    const rpm = (100 * 60) / 4;
    const cap = simulateCapture(
      spec({
        profile: { kind: 'constant', speedRpm: rpm },
        sampleRateHz: fs,
        noiseV: 0,
        commonModeV: 0,
        electricalTurns: 17,
      }),
      createRng(8),
    );
    const va = cap.csv
      .trim()
      .split('\n')
      .slice(1, 1 + 8 * 2048)
      .map((l) => Number(l.split(',')[1]));
    const f = new FFT(va.length);
    const out = f.createComplexArray() as number[];
    f.realTransform(out, va);
    const amp = (h: number) => Math.hypot(out[2 * h * 8], out[2 * h * 8 + 1]);
    let s = 0;
    for (let h = 2; h <= 15; h++) s += amp(h) ** 2;
    const refThd = (100 * Math.sqrt(s)) / amp(1);
    const { result } = calibrateCapture(cap.csv, recipe);
    expect(result.capture!.thdPct[0]).toBeCloseTo(refThd, 1);
  });

  it('rejects a capture without hall columns or back-EMF columns, naming what is missing', () => {
    try {
      calibrateCapture('time_s,va,vb,x\n0,1,2,3\n', recipe);
      throw new Error('accepted');
    } catch (e) {
      expect(e).toBeInstanceOf(CalibrationInputError);
      const text = (e as CalibrationInputError).issues.map((i) => i.message).join(' | ');
      expect(text).toMatch(/va, vb, vc or vab, vbc, vca/);
      expect(text).toMatch(/ha, hb, hc/);
    }
  });

  it('rejects time that does not increase', () => {
    expect(() =>
      calibrateCapture('time_s,va,vb,vc,ha,hb,hc\n0,1,2,3,0,0,1\n0,1,2,3,0,0,1\n', recipe),
    ).toThrow(/must increase/);
  });
});

describe('captures of anything numeric', () => {
  it('give a schema-valid result or a typed input error, never anything else', () => {
    fc.assert(
      fc.property(
        fc.array(fc.array(fc.double({ min: -10, max: 10, noNaN: true }), { minLength: 6, maxLength: 6 }), {
          minLength: 0,
          maxLength: 400,
        }),
        fc.boolean(),
        (rows, line) => {
          const header = line ? 'time_s,vab,vbc,vca,ha,hb,hc' : 'time_s,va,vb,vc,ha,hb,hc';
          const csv = [
            header,
            ...rows.map((r, i) =>
              [(i * 1e-5).toFixed(6), ...r.slice(0, 3), ...r.slice(3).map((h) => (h > 0 ? 1 : 0))].join(','),
            ),
          ].join('\n');
          let result: unknown;
          try {
            result = calibrateCapture(csv, recipe).result;
          } catch (e) {
            expect(e).toBeInstanceOf(CalibrationInputError);
            return;
          }
          const parsed = calibrationResultSchema.safeParse(result);
          expect(parsed.success, JSON.stringify(parsed.error?.issues.slice(0, 3))).toBe(true);
        },
      ),
      { numRuns: 60, seed: 3 },
    );
  });
});
