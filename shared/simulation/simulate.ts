import type { BemfChannel, BemfCrossing, HallEdge, HallSensor, Measurement } from '../schemas/measurement';
import { buildMotion, type Motion, type MotionProfile } from './motion';
import type { Rng } from './rng';

/**
 * An independent physical generator of measurements with ground truth. It models the winding (flux
 * linkage ψ·cos(θ − φx) per phase, terminals wired to windings), the magnet and sensors (switching points,
 * hysteresis, latency, per-pole-pair magnetisation error, bounce, a dead sensor) and the station
 * (detector delay, timing jitter, dropped crossings). It deliberately shares no code with the engine:
 * crossing angles come from the winding phasors, not from the engine's crossing table.
 */

export type { MotionProfile } from './motion';

export interface SimSegmentSpec {
  direction: 'forward' | 'reverse';
  profile: MotionProfile;
  electricalTurns: number;
  /** Rotor electrical angle at segment start, degrees (default random). */
  startAngleDeg?: number;
}

export interface SimulationSpec {
  polePairs: number;
  /** Nominal rise angles of the recipe. */
  hallRiseDeg: Record<HallSensor, number>;
  /** True geometric offset g, degrees: an edge happens at nominal + g (+ errors and lag). */
  offsetDeg: number;
  /** Static placement error per sensor (both its edges), degrees. */
  sensorErrorDeg?: Partial<Record<HallSensor, number>>;
  /** Extra error of the rise boundary relative to the fall boundary per sensor (duty error), degrees. */
  riseErrorDeg?: Partial<Record<HallSensor, number>>;
  /** Magnetisation error per pole pair (index = electrical turn modulo pole pairs), degrees. */
  polePairErrorDeg?: number[];
  /** Magnetic hysteresis: edges come this many degrees late in the direction of motion. */
  hysteresisDeg?: number;
  /** Sensor switching latency, µs: edges come this much later in time. */
  latencyUs?: number;
  /** Standard deviation of Gaussian timing noise on every event, µs. */
  jitterUs?: number;
  /** Back-EMF detector delay, µs, added to every crossing. */
  bemfDelayUs?: number;
  /** Channels the station reports. */
  channels?: BemfChannel[];
  /** Probability that a crossing is lost. */
  dropCrossingProbability?: number;
  /** Probability that a hall edge bounces (adds a sub-microsecond pair after it). */
  bounceProbability?: number;
  /** Winding phases B and C swapped at the terminals. */
  miswiredBC?: boolean;
  /** A sensor that never switches. */
  deadSensor?: HallSensor;
  segments: SimSegmentSpec[];
  measurementId?: string;
  serial?: string;
}

export interface SegmentTruth {
  direction: 'forward' | 'reverse';
  /** Offset this segment should measure: circular mean over the six edge types of (true θ at edge − nominal). */
  offsetDeg: number;
  /** Mean electrical frequency, Hz. */
  electricalHz: number;
  /** Mean mechanical speed, rpm. */
  speedRpm: number;
  electricalTurns: number;
}

export interface SimulationTruth {
  /** Geometric offset with the static sensor errors averaged in: what calibration should program. */
  offsetDeg: number;
  hysteresisDeg: number;
  latencyUs: number;
  segments: SegmentTruth[];
}

export interface SimulatedMeasurement {
  measurement: Measurement;
  truth: SimulationTruth;
  /** True rotor speed per segment, electrical degrees per µs at a measurement time (for error bounds). */
  speedAt: ((us: number) => number)[];
}

const RAD = Math.PI / 180;
const PHASE_DEG = { A: 0, B: 120, C: 240 } as const;
const mod360 = (x: number) => ((x % 360) + 360) % 360;
const wrap180 = (x: number) => {
  const w = mod360(x);
  return w > 180 ? w - 360 : w;
};

function circMean(values: number[]): number {
  let c = 0;
  let s = 0;
  for (const v of values) {
    c += Math.cos(v * RAD);
    s += Math.sin(v * RAD);
  }
  return Math.atan2(s, c) / RAD;
}

/** Terminal weights of each channel: phase channels see one terminal, line channels the difference of two. */
const CHANNEL_TERMINALS: Record<BemfChannel, Partial<Record<HallSensor, number>>> = {
  A: { A: 1 },
  B: { B: 1 },
  C: { C: 1 },
  AB: { A: 1, B: -1 },
  BC: { B: 1, C: -1 },
  CA: { C: 1, A: -1 },
};

/**
 * Angles at which a channel's voltage crosses zero. v = −ψ·θ̇·Σ w·sin(θ − φ) = −ψ·θ̇·R·sin(θ + β) with
 * R·e^{iβ} = Σ w·e^{−iφ}; it rises through zero (in time, either direction) where cos(θ + β) < 0.
 */
export function channelZeroAngles(channel: BemfChannel, miswiredBC = false): { rise: number; fall: number } {
  let re = 0;
  let im = 0;
  for (const [terminal, w] of Object.entries(CHANNEL_TERMINALS[channel]) as [HallSensor, number][]) {
    const winding: HallSensor = miswiredBC && terminal !== 'A' ? (terminal === 'B' ? 'C' : 'B') : terminal;
    re += w * Math.cos(-PHASE_DEG[winding] * RAD);
    im += w * Math.sin(-PHASE_DEG[winding] * RAD);
  }
  const beta = Math.atan2(im, re) / RAD;
  return { rise: mod360(180 - beta), fall: mod360(-beta) };
}

interface Event {
  us: number;
  /** Electrical angle (unwrapped, segment frame) at the true event. */
  thetaDeg: number;
}

/** All times in a segment at which θ ≡ angle (mod 360), the angle possibly depending on the turn. */
function eventsAt(
  motion: Motion,
  theta0: number,
  sign: number,
  totalDeg: number,
  angleDeg: number,
  perTurn?: (turn: number) => number,
): Event[] {
  const out: Event[] = [];
  const first = mod360(sign * (angleDeg - theta0));
  for (let phi = first; phi <= totalDeg + 360; phi += 360) {
    let target = phi;
    if (perTurn) {
      const theta = theta0 + sign * phi;
      target = phi + sign * perTurn(Math.floor(theta / 360));
    }
    if (target < 0 || target > totalDeg) continue;
    out.push({ us: motion.timeAt(target), thetaDeg: theta0 + sign * target });
  }
  return out;
}

const SENSORS: HallSensor[] = ['A', 'B', 'C'];

/** Simulates a measurement from a physical spec; returns it with the ground truth. */
export function simulateMeasurement(spec: SimulationSpec, rng: Rng): SimulatedMeasurement {
  const jitter = spec.jitterUs ?? 0;
  const delay = spec.bemfDelayUs ?? 0;
  const channels = spec.channels ?? ['A', 'B', 'C'];
  const h = spec.hysteresisDeg ?? 0;
  const tau = spec.latencyUs ?? 0;
  const pp = spec.polePairs;
  const ppErr = (turn: number) => spec.polePairErrorDeg?.[((turn % pp) + pp) % pp] ?? 0;
  const staticErr = (s: HallSensor) => spec.sensorErrorDeg?.[s] ?? 0;
  const riseErr = (s: HallSensor) => spec.riseErrorDeg?.[s] ?? 0;
  const segmentsOut: Measurement['segments'] = [];
  const truths: SegmentTruth[] = [];
  const speedAt: ((us: number) => number)[] = [];

  for (const seg of spec.segments) {
    const sign = seg.direction === 'forward' ? 1 : -1;
    const motion = buildMotion(seg.profile, pp, seg.electricalTurns);
    const total = seg.electricalTurns * 360;
    const theta0 = seg.startAngleDeg ?? rng.next() * 360;
    const startUs = 500 + rng.next() * 500;
    speedAt.push((us) => motion.speed(Math.max(0, us - startUs)));

    const crossings: BemfCrossing[] = [];
    for (const channel of channels) {
      const z = channelZeroAngles(channel, spec.miswiredBC);
      for (const edge of ['rise', 'fall'] as const) {
        for (const ev of eventsAt(motion, theta0, sign, total, z[edge])) {
          if (spec.dropCrossingProbability && rng.next() < spec.dropCrossingProbability) continue;
          crossings.push({ channel, edge, us: startUs + ev.us + delay + jitter * rng.normal() });
        }
      }
    }
    crossings.sort((a, b) => a.us - b.us);

    const edges: HallEdge[] = [];
    const perType = new Map<string, number[]>();
    for (const sensor of SENSORS) {
      if (spec.deadSensor === sensor) continue;
      // Where the sensor switches on (goes high turning forward) and off, in true rotor angle.
      const on = spec.hallRiseDeg[sensor] + spec.offsetDeg + staticErr(sensor) + riseErr(sensor);
      const off = spec.hallRiseDeg[sensor] + 180 + spec.offsetDeg + staticErr(sensor);
      for (const boundary of [on, off]) {
        const isOn = boundary === on;
        // Turning forward the on-point gives a rise; in reverse the sensor rises at its off-point.
        const edge = isOn === sign > 0 ? 'rise' : 'fall';
        for (const ev of eventsAt(motion, theta0, sign, total, boundary + sign * h, ppErr)) {
          const tTrue = ev.us + tau;
          if (tTrue > motion.durationUs) continue;
          const thetaAtEdge = theta0 + sign * motion.travelled(tTrue);
          const nominal = spec.hallRiseDeg[sensor] + ((edge === 'rise') === sign > 0 ? 0 : 180);
          const key = `${sensor}${edge}`;
          if (!perType.has(key)) perType.set(key, []);
          perType.get(key)!.push(wrap180(thetaAtEdge - nominal));
          const us = startUs + tTrue + jitter * rng.normal();
          edges.push({ sensor, edge, us });
          if (spec.bounceProbability && rng.next() < spec.bounceProbability) {
            const b1 = 0.1 + 0.3 * rng.next();
            const b2 = 0.1 + 0.3 * rng.next();
            edges.push({ sensor, edge: edge === 'rise' ? 'fall' : 'rise', us: us + b1 });
            edges.push({ sensor, edge, us: us + b1 + b2 });
          }
        }
      }
    }
    edges.sort((a, b) => a.us - b.us);
    segmentsOut.push({ direction: seg.direction, hallEdges: edges, bemfCrossings: crossings });
    const typeMeans = [...perType.values()].map(circMean);
    const electricalHz = (total / motion.durationUs) * (1e6 / 360);
    truths.push({
      direction: seg.direction,
      offsetDeg: wrap180(circMean(typeMeans)),
      electricalHz,
      speedRpm: (electricalHz * 60) / pp,
      electricalTurns: seg.electricalTurns,
    });
  }

  const typeStatic = SENSORS.flatMap((s) => [
    spec.offsetDeg + staticErr(s) + riseErr(s),
    spec.offsetDeg + staticErr(s),
  ]);
  return {
    measurement: {
      measurementId: spec.measurementId ?? `sim-${Math.floor(rng.next() * 1e9)}`,
      serial: spec.serial ?? 'SIM-0001',
      segments: segmentsOut,
    },
    truth: { offsetDeg: wrap180(circMean(typeStatic)), hysteresisDeg: h, latencyUs: tau, segments: truths },
    speedAt,
  };
}
