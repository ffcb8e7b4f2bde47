import type { HallSensor } from '../schemas/measurement';
import { buildMotion, type MotionProfile } from './motion';
import type { Rng } from './rng';
import { simulateMeasurement, type SimulationTruth } from './simulate';

/**
 * Sampled CSV captures from the same physical model as simulateMeasurement: phase back-EMF
 * e_x = −(Ke/√3)·(n/1000)·[sin(θ − φx) + Σ a_h·sin(h·(θ − φx))] (Ke line-to-line peak per krpm, n signed rpm),
 * optional common-mode offset and Gaussian noise, and hall levels from the same switching points.
 * Harmonics are odd with zero phase, which leaves the zero crossings where the fundamental has them.
 */

export interface CaptureSimSpec {
  polePairs: number;
  hallRiseDeg: Record<HallSensor, number>;
  offsetDeg: number;
  sensorErrorDeg?: Partial<Record<HallSensor, number>>;
  hysteresisDeg?: number;
  latencyUs?: number;
  direction: 'forward' | 'reverse';
  profile: MotionProfile;
  electricalTurns: number;
  /** Line-to-line back-EMF constant, fundamental peak, V per 1000 rpm. */
  keVPerKrpm: number;
  /** Odd harmonics relative to the fundamental, e.g. { 5: 0.03, 7: 0.01 }. */
  harmonics?: Record<number, number>;
  /** Per-phase amplitude factors (winding imbalance), default 1. */
  phaseGain?: Partial<Record<HallSensor, number>>;
  sampleRateHz: number;
  noiseV?: number;
  /** Common-mode voltage on every phase column (phase captures only), V. */
  commonModeV?: number;
  channels: 'phase' | 'line';
  /** Hall high level in the file (e.g. 1 or 5). */
  hallHighV?: number;
  deadSensor?: HallSensor;
  startAngleDeg?: number;
}

export interface SimulatedCapture {
  csv: string;
  rows: number;
  truth: SimulationTruth;
}

const RAD = Math.PI / 180;
const PHASE = { A: 0, B: 120, C: 240 } as const;
const mod360 = (x: number) => ((x % 360) + 360) % 360;

/** Fixed-point text for a number with `digits` decimals (much faster than toFixed for large files). */
function fixed(x: number, digits: number): string {
  const n = Math.round(Math.abs(x) * 10 ** digits);
  const s = String(n).padStart(digits + 1, '0');
  const text = `${s.slice(0, s.length - digits)}.${s.slice(s.length - digits)}`;
  return x < 0 && n !== 0 ? `-${text}` : text;
}

/**
 * Simulates a sampled capture. With `sink`, the CSV text is handed over in chunks (header first) and the
 * returned `csv` is empty, so very large files need not sit in memory twice.
 */
export function simulateCapture(
  spec: CaptureSimSpec,
  rng: Rng,
  sink?: (chunk: string) => void,
): SimulatedCapture {
  const theta0 = spec.startAngleDeg ?? rng.next() * 360;
  // Ground truth from the event simulator (same physics, noise-free events).
  const { truth } = simulateMeasurement(
    {
      polePairs: spec.polePairs,
      hallRiseDeg: spec.hallRiseDeg,
      offsetDeg: spec.offsetDeg,
      sensorErrorDeg: spec.sensorErrorDeg,
      hysteresisDeg: spec.hysteresisDeg,
      latencyUs: spec.latencyUs,
      segments: [
        {
          direction: spec.direction,
          profile: spec.profile,
          electricalTurns: spec.electricalTurns,
          startAngleDeg: theta0,
        },
      ],
    },
    rng,
  );
  const motion = buildMotion(spec.profile, spec.polePairs, spec.electricalTurns);
  const sign = spec.direction === 'forward' ? 1 : -1;
  const dtUs = 1e6 / spec.sampleRateHz;
  const rows = Math.floor(motion.durationUs / dtUs);
  const noise = spec.noiseV ?? 0;
  const cm = spec.commonModeV ?? 0;
  const high = spec.hallHighV ?? 1;
  const h = spec.hysteresisDeg ?? 0;
  const tau = spec.latencyUs ?? 0;
  const harmonics = Object.entries(spec.harmonics ?? {}).map(([k, a]) => [Number(k), a] as const);
  const gain = (x: HallSensor) => spec.phaseGain?.[x] ?? 1;
  const ePhasePerKrpm = spec.keVPerKrpm / Math.sqrt(3);
  const header = spec.channels === 'phase' ? 'time_s,va,vb,vc,ha,hb,hc' : 'time_s,vab,vbc,vca,ha,hb,hc';
  let lines: string[] = [header];
  const chunks: string[] = [];
  const flush = () => {
    const chunk = lines.join('\n') + '\n';
    if (sink) sink(chunk);
    else chunks.push(chunk);
    lines = [];
  };
  const sensors: HallSensor[] = ['A', 'B', 'C'];
  const thetaAt = (t: number) => theta0 + sign * motion.travelled(Math.max(0, t));
  for (let i = 0; i < rows; i++) {
    const t = i * dtUs;
    const theta = thetaAt(t);
    const rpmSigned = (sign * motion.speed(t) * 1e6 * 60) / 360 / spec.polePairs;
    const e = (x: HallSensor) => {
      const a = (theta - PHASE[x]) * RAD;
      let s = Math.sin(a);
      for (const [k, amp] of harmonics) s += amp * Math.sin(k * a);
      return -gain(x) * ePhasePerKrpm * (rpmSigned / 1000) * s;
    };
    const ea = e('A');
    const eb = e('B');
    const ec = e('C');
    const v = spec.channels === 'phase' ? [ea + cm, eb + cm, ec + cm] : [ea - eb, eb - ec, ec - ea];
    // Sensors see the rotor τ late, and switch h late in the direction of motion.
    const thetaSeen = thetaAt(t - tau);
    const hall = sensors.map((x) => {
      if (spec.deadSensor === x) return 0;
      const on = spec.hallRiseDeg[x] + spec.offsetDeg + (spec.sensorErrorDeg?.[x] ?? 0) + sign * h;
      return mod360(thetaSeen - on) < 180 ? high : 0;
    });
    lines.push(
      `${fixed(t / 1e6, 9)},${fixed(v[0] + noise * rng.normal(), 5)},${fixed(v[1] + noise * rng.normal(), 5)},${fixed(v[2] + noise * rng.normal(), 5)},${hall[0]},${hall[1]},${hall[2]}`,
    );
    if (lines.length >= 10_000) flush();
  }
  if (lines.length > 0) flush();
  return { csv: chunks.join(''), rows, truth };
}
