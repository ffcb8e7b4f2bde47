import type { HallSensor, Measurement } from '#shared/schemas/measurement';
import { createRng, type Rng } from '#shared/simulation/rng';
import { simulateMeasurement, type SimulationSpec } from '#shared/simulation/simulate';
import { DEMO_TURNS_PER_SEGMENT, type DemoModel, type DemoRig } from './demo-line.scenario';

/**
 * One physical unit and one station run of it, built on the shared measurement simulator. The
 * simulator is the ground truth; this file only decides what a unit is like (placement, lot,
 * faults) and how a rig records it (directions, detector delay, jitter, coast-down).
 */

/**
 * What can be wrong with a unit: `magnet` (ring glued rotated: a large offset on every attempt),
 * `dead-sensor` (a hall sensor never switches: fails every attempt), `seating` (poorly seated in the
 * fixture on the first attempt: noisy timings that fail the fit; the retest passes).
 */
export type UnitFault = 'magnet' | 'dead-sensor' | 'seating';

export interface UnitTruth {
  offsetDeg: number;
  sensorErrorDeg: Record<HallSensor, number>;
  riseErrorDeg: Record<HallSensor, number>;
  polePairErrorDeg: number[];
  hysteresisDeg: number;
  latencyUs: number;
  fault: UnitFault | null;
  deadSensor: HallSensor | null;
}

const SENSORS: HallSensor[] = ['A', 'B', 'C'];
const between = (rng: Rng, [lo, hi]: [number, number]) => lo + (hi - lo) * rng.next();

/** Draws a unit of a model; `lotShiftDeg` rotates all three sensors (a hall-board lot effect). */
export function drawUnit(
  model: DemoModel,
  rng: Rng,
  opts: { lotShiftDeg?: number; badRate?: number } = {},
): UnitTruth {
  const p = model.physics;
  const per = (sd: number) =>
    Object.fromEntries(SENSORS.map((s) => [s, sd * rng.normal()])) as Record<HallSensor, number>;
  const badRate = opts.badRate ?? 0;
  let fault: UnitFault | null = null;
  if (rng.next() < badRate) {
    const u = rng.next();
    fault = u < 0.4 ? 'seating' : u < 0.75 ? 'magnet' : 'dead-sensor';
  }
  let offsetDeg = p.offsetMeanDeg + p.offsetSdDeg * rng.normal() + (opts.lotShiftDeg ?? 0);
  if (fault === 'magnet') offsetDeg += (rng.next() < 0.5 ? -1 : 1) * (18 + 12 * rng.next());
  return {
    offsetDeg,
    sensorErrorDeg: per(p.sensorSdDeg),
    riseErrorDeg: per(p.dutySdDeg),
    polePairErrorDeg: Array.from({ length: model.polePairs }, () => p.polePairSdDeg * rng.normal()),
    hysteresisDeg: between(rng, p.hysteresisDeg),
    latencyUs: between(rng, p.latencyUs),
    fault,
    deadSensor: fault === 'dead-sensor' ? SENSORS[Math.floor(rng.next() * 3)] : null,
  };
}

export interface RunConditions {
  rig: DemoRig;
  /** Fraction of the rig's drift reached at the time of the run, 0..1. */
  driftFraction?: number;
  /** 1 for the first attempt on this unit. */
  attempt: number;
}

/** The simulator spec of one station run of a unit. */
export function runSpec(
  model: DemoModel,
  unit: UnitTruth,
  cond: RunConditions,
  rng: Rng,
  ids: { measurementId: string; serial: string },
): SimulationSpec {
  const p = model.physics;
  const segment = (direction: 'forward' | 'reverse') => {
    const startRpm = between(rng, p.coastStartRpm);
    return {
      direction,
      profile: { kind: 'coast' as const, startRpm, endRpm: startRpm * p.coastEndRatio },
      electricalTurns: DEMO_TURNS_PER_SEGMENT,
    };
  };
  const seatingTrouble = unit.fault === 'seating' && cond.attempt === 1;
  return {
    polePairs: model.polePairs,
    hallRiseDeg: model.recipe.hallRiseDeg,
    offsetDeg: unit.offsetDeg,
    sensorErrorDeg: unit.sensorErrorDeg,
    riseErrorDeg: unit.riseErrorDeg,
    polePairErrorDeg: unit.polePairErrorDeg,
    hysteresisDeg: unit.hysteresisDeg,
    latencyUs: unit.latencyUs,
    // A loose fixture shakes the rotor and the probe contacts: 30 µs of timing noise fails the fit.
    jitterUs: seatingTrouble ? 30 : cond.rig.jitterUs,
    bemfDelayUs: cond.rig.detectorDelayUs + cond.rig.detectorDriftUs * (cond.driftFraction ?? 0),
    channels: ['A', 'B', 'C'],
    bounceProbability: 0.02,
    deadSensor: unit.deadSensor ?? undefined,
    segments:
      cond.rig.directions === 'both' ? [segment('forward'), segment('reverse')] : [segment('forward')],
    measurementId: ids.measurementId,
    serial: ids.serial,
  };
}

/** The measurement a rig posts for one run of a unit. */
export function simulateRun(
  model: DemoModel,
  unit: UnitTruth,
  cond: RunConditions,
  rng: Rng,
  ids: { measurementId: string; serial: string },
): Measurement {
  return simulateMeasurement(runSpec(model, unit, cond, rng, ids), rng).measurement;
}

/** A short opaque checksum of a unit's calibration block, as a station would read it back (CRC-32, hex). */
export function calibrationBlockChecksum(serial: string, counts: number): string {
  const bytes = new TextEncoder().encode(`${serial}:${counts}`);
  let crc = 0xffffffff;
  for (const b of bytes) {
    crc ^= b;
    for (let k = 0; k < 8; k++) crc = crc & 1 ? (crc >>> 1) ^ 0xedb88320 : crc >>> 1;
  }
  return ((crc ^ 0xffffffff) >>> 0).toString(16).padStart(8, '0');
}

/**
 * The physics of a model's reference unit: a good unit drawn from a seed named after its serial, so
 * the demo seed and `station:sim` measure the same motor wherever they run.
 */
export function referenceUnitTruth(model: DemoModel, serial: string): UnitTruth {
  let h = 0x811c9dc5;
  for (const c of new TextEncoder().encode(serial)) h = Math.imul(h ^ c, 0x01000193) >>> 0;
  return drawUnit(model, createRng(h), { badRate: 0 });
}

/** The serial of a model's demo reference unit ("R-57B-01" for CV-57B). */
export function referenceSerial(modelCode: string): string {
  return `R-${modelCode.replace(/^[A-Z]+-/, '')}-01`;
}
