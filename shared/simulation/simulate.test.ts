import { describe, expect, it } from 'vitest';
import { measurementSchema } from '../schemas/measurement';
import { buildMotion } from './motion';
import { createRng } from './rng';
import { channelZeroAngles, simulateMeasurement } from './simulate';

describe('simulator physics', () => {
  it('puts zero crossings where the winding voltages change sign (flux λx = ψ·cos(θ − φx), derived)', () => {
    const phase = { A: 0, B: 120, C: 240 };
    const v = (x: 'A' | 'B' | 'C', th: number) => -Math.sin(((th - phase[x]) * Math.PI) / 180);
    for (const ch of ['A', 'B', 'C', 'AB', 'BC', 'CA'] as const) {
      const z = channelZeroAngles(ch);
      const volt = (th: number) =>
        ch.length === 1 ? v(ch as 'A', th) : v(ch[0] as 'A', th) - v(ch[1] as 'A', th);
      expect(Math.abs(volt(z.rise))).toBeLessThan(1e-9);
      expect(volt(z.rise + 1)).toBeGreaterThan(volt(z.rise - 1));
      expect(volt(z.fall + 1)).toBeLessThan(volt(z.fall - 1));
    }
    // Swapping windings B and C moves terminal B's crossings to where C's were.
    expect(channelZeroAngles('B', true)).toEqual(channelZeroAngles('C'));
  });

  it('inverts its motion laws to better than a nanosecond', () => {
    for (const profile of [
      { kind: 'constant', speedRpm: 1234 },
      { kind: 'coast', startRpm: 6000, endRpm: 1000 },
      { kind: 'ramp', startRpm: 200, endRpm: 9000 },
    ] as const) {
      const m = buildMotion(profile, 5, 30);
      expect(m.travelled(m.durationUs)).toBeCloseTo(30 * 360, 6);
      for (const deg of [0, 1, 359.5, 5000, 10799]) expect(m.travelled(m.timeAt(deg))).toBeCloseTo(deg, 6);
    }
  });

  it('produces valid, reproducible measurements with bounce, drops and a dead sensor', () => {
    const spec = {
      polePairs: 2,
      hallRiseDeg: { A: 0, B: 120, C: 240 },
      offsetDeg: 3,
      jitterUs: 1,
      bounceProbability: 0.5,
      dropCrossingProbability: 0.2,
      deadSensor: 'C' as const,
      segments: [
        {
          direction: 'reverse' as const,
          profile: { kind: 'constant' as const, speedRpm: 600 },
          electricalTurns: 10,
        },
      ],
    };
    const a = simulateMeasurement(spec, createRng(4));
    const b = simulateMeasurement(spec, createRng(4));
    expect(a.measurement).toEqual(b.measurement);
    expect(measurementSchema.safeParse(a.measurement).success).toBe(true);
    const edges = a.measurement.segments[0].hallEdges;
    expect(edges.some((e) => e.sensor === 'C')).toBe(false);
    // 2 sensors × 2 edges × 10 turns, plus two extra edges per bounce.
    expect(edges.length).toBeGreaterThan(40);
    expect((edges.length - 40) % 2).toBe(0);
    expect(a.measurement.segments[0].bemfCrossings.length).toBeLessThan(60);
    expect(a.truth.segments[0].speedRpm).toBeCloseTo(600, 6);
  });
});
