import type {
  Direction,
  EdgeKind,
  HallSensor,
  Measurement,
  MeasurementSegment,
} from '../schemas/measurement';
import type { Recipe } from '../schemas/recipe';
import type {
  CalibrationResult,
  Check,
  DriveImpact,
  EdgeTypeResult,
  SegmentResult,
  SensorResult,
  SpacingResult,
} from '../schemas/calibration-result';
import { circularMeanDeg, wrapDeg180, wrapDeg360 } from './angles';
import {
  DEFAULT_ANGLE_FIT,
  crossingDirection,
  fitAngle,
  unwrapCrossings,
  type AngleFitOptions,
} from './angle-fit';
import { deriveHallLayout, nominalEdgeDeg, SENSORS, type HallLayout } from './hall-layout';
import { debounceHallEdges, walkHallStates } from './hall-edges';
import { CalibrationInputError, validateCalibrationInput } from './input';
import { IDEAL_SIX_STEP_BOUNDARIES_DEG, sixStepTorque } from './drive-impact';
import { buildChecks, verdictOf } from './checks';

/** Version of the computation; stored with every result so old results can be traced to their maths. */
export const ENGINE_VERSION = '1.0.0';

export interface EngineOptions {
  /** Override the angle fit (benchmarks compare against a single straight line). */
  angleFit?: Partial<AngleFitOptions>;
}

/** The six edge types in result order. */
export const EDGE_TYPES: ReadonlyArray<{ sensor: HallSensor; edge: EdgeKind }> = [
  { sensor: 'A', edge: 'rise' },
  { sensor: 'A', edge: 'fall' },
  { sensor: 'B', edge: 'rise' },
  { sensor: 'B', edge: 'fall' },
  { sensor: 'C', edge: 'rise' },
  { sensor: 'C', edge: 'fall' },
];

const RAD = Math.PI / 180;

const typeIndex = (sensor: HallSensor, edge: EdgeKind): number =>
  SENSORS.indexOf(sensor) * 2 + (edge === 'rise' ? 0 : 1);

const dirName = (sign: number): Direction => (sign >= 0 ? 'forward' : 'reverse');
const dirOrNull = (sign: -1 | 0 | 1): Direction | null => (sign === 0 ? null : dirName(sign));

/** Intermediate figures of one segment, kept for combining segments. */
export interface SegmentWork {
  result: SegmentResult;
  /** +1 or −1: the direction used for the nominal edge angles. */
  sign: 1 | -1;
  typeResiduals: (number | null)[];
  typeCounts: number[];
  /** Per type: Σcos, Σsin of the single-edge offsets and their number. */
  typeSums: { c: number; s: number; n: number }[];
  sensorEdges: Record<HallSensor, number>;
  bounce: Record<HallSensor, number>;
  dutyPct: Record<HallSensor, number | null>;
  durationUs: number;
  fitSquares: number;
}

function processSegment(
  segment: MeasurementSegment,
  index: number,
  recipe: Recipe,
  layout: HallLayout,
  fitOptions: AngleFitOptions,
): SegmentWork {
  const declared: 1 | -1 = segment.direction === 'forward' ? 1 : -1;
  const debounced = debounceHallEdges(segment.hallEdges, recipe.debounceUs);
  const walk = walkHallStates(debounced.edges, layout);
  const bemfDir = crossingDirection(segment.bemfCrossings);
  const hallDir = walk.direction;
  // Nominal angles follow the direction the rotor demonstrably turned; the checks flag any disagreement.
  let sign: 1 | -1 = declared;
  if (hallDir !== 0 && (bemfDir === 0 || bemfDir === hallDir)) sign = hallDir;
  const track = unwrapCrossings(segment.bemfCrossings, recipe.bemfDelayUs, bemfDir !== 0 ? bemfDir : sign);
  const n = track.tUs.length;
  if (n < 4 || !(track.tUs[n - 1] > track.tUs[0])) {
    throw new CalibrationInputError([
      {
        path: `measurement.segments[${index}].bemfCrossings`,
        message: 'needs at least four distinct back-EMF crossings spread over time to fit the angle',
      },
    ]);
  }
  const fit = fitAngle(track, fitOptions);
  const direction = dirName(sign);

  // Per edge type (and per pole pair and type) the sums of cos/sin of the single-edge offsets: every
  // circular mean and spread below comes from these, one cos/sin pair per edge.
  const pp = recipe.polePairs;
  const sumC = new Float64Array(6);
  const sumS = new Float64Array(6);
  const count = new Int32Array(6);
  const ppC = new Float64Array(pp * 6);
  const ppS = new Float64Array(pp * 6);
  const ppN = new Int32Array(pp * 6);
  const nominal = EDGE_TYPES.map((et) => nominalEdgeDeg(recipe.hallRiseDeg, et.sensor, et.edge, direction));
  // Per sensor (A, B, C = 0, 1, 2): edges seen, angle of the last rise, and the high spans for the duty.
  const edgeCount = new Int32Array(3);
  const lastRise = new Float64Array(3).fill(NaN);
  const highSum = new Float64Array(3);
  const highN = new Int32Array(3);
  let outside = 0;
  const edgesIn = debounced.edges;
  for (let i = 0; i < edgesIn.length; i++) {
    const e = edgesIn[i];
    const si = e.sensor === 'A' ? 0 : e.sensor === 'B' ? 1 : 2;
    const rise = e.edge === 'rise';
    edgeCount[si]++;
    const theta = fit.thetaAt(e.us);
    if (Number.isNaN(theta)) {
      outside++;
      lastRise[si] = NaN;
      continue;
    }
    const k = si * 2 + (rise ? 0 : 1);
    const off = (theta - nominal[k]) * RAD;
    const c = Math.cos(off);
    const sn = Math.sin(off);
    sumC[k] += c;
    sumS[k] += sn;
    count[k]++;
    const turn = Math.floor(theta / 360);
    const g = (((turn % pp) + pp) % pp) * 6 + k;
    ppC[g] += c;
    ppS[g] += sn;
    ppN[g]++;
    if (rise) lastRise[si] = theta;
    else {
      if (!Number.isNaN(lastRise[si])) {
        highSum[si] += (sign * (theta - lastRise[si])) / 360;
        highN[si]++;
      }
      lastRise[si] = NaN;
    }
  }
  const sensorEdges: Record<HallSensor, number> = { A: edgeCount[0], B: edgeCount[1], C: edgeCount[2] };
  const meanOf = (c: number, sn: number, n: number) =>
    n > 0 && Math.hypot(c, sn) > 1e-12 * n ? wrapDeg180(Math.atan2(sn, c) / RAD) : null;
  const typeMeans = EDGE_TYPES.map((_, k) => meanOf(sumC[k], sumS[k], count[k]));
  const present = typeMeans.filter((m): m is number => m !== null);
  const offsetDeg = circularMeanDeg(present);
  const typeResiduals = typeMeans.map((m) =>
    m === null || offsetDeg === null ? null : wrapDeg180(m - offsetDeg),
  );
  const typeSums = EDGE_TYPES.map((_, k) => ({ c: sumC[k], s: sumS[k], n: count[k] }));
  const polePairOffsetsDeg = Array.from({ length: pp }, (_, g) => {
    const means: number[] = [];
    for (let k = 0; k < 6; k++) {
      const m = meanOf(ppC[g * 6 + k], ppS[g * 6 + k], ppN[g * 6 + k]);
      if (m !== null) means.push(m);
    }
    return means.length > 0 ? circularMeanDeg(means) : null;
  });
  const dutyPct = {} as Record<HallSensor, number | null>;
  SENSORS.forEach((s, si) => (dutyPct[s] = highN[si] > 0 ? (100 * highSum[si]) / highN[si] : null));

  const t = track.tUs;
  const th = track.thetaDeg;
  const durationUs = t[n - 1] - t[0];
  const turns = Math.abs(th[n - 1] - th[0]) / 360;
  const hzOf = (degPerUs: number) => (Math.abs(degPerUs) * 1e6) / 360;
  const electricalHz = hzOf((th[n - 1] - th[0]) / durationUs);
  const rpmOf = (hz: number) => (hz * 60) / pp;
  let rMin = Infinity;
  let rMax = -Infinity;
  for (const r of fit.anchorRates) {
    const hz = hzOf(r);
    if (hz < rMin) rMin = hz;
    if (hz > rMax) rMax = hz;
  }
  const finite = [
    electricalHz,
    fit.residualRmsDeg ** 2 * n,
    durationUs,
    turns,
    rMin,
    rMax,
    ...typeMeans.map((m) => m ?? 0),
  ];
  if (!(electricalHz > 0) || !finite.every(Number.isFinite)) {
    throw new CalibrationInputError([
      {
        path: `measurement.segments[${index}].bemfCrossings`,
        message: 'the crossings do not give a usable rotor speed (are the times in microseconds?)',
      },
    ]);
  }
  const result: SegmentResult = {
    index,
    direction: segment.direction,
    hallDirection: dirOrNull(hallDir),
    bemfDirection: dirOrNull(bemfDir),
    offsetDeg,
    speedRpm: rpmOf(electricalHz),
    electricalHz,
    speedStartRpm: rpmOf(hzOf(fit.anchorRates[0])),
    speedEndRpm: rpmOf(hzOf(fit.anchorRates[fit.anchorRates.length - 1])),
    speedVariationPct: electricalHz > 0 ? (100 * (rMax - rMin)) / electricalHz : 0,
    electricalTurns: turns,
    fitResidualDeg: fit.residualRmsDeg,
    crossingsUsed: n,
    edgesUsed: debounced.edges.length - outside,
    edgesOutsideFit: outside,
    polePairOffsetsDeg,
    invalidStates: walk.invalidStates,
  };
  return {
    result,
    sign,
    typeResiduals,
    typeCounts: Array.from(count),
    typeSums,
    sensorEdges,
    bounce: debounced.bounce,
    dutyPct,
    durationUs,
    fitSquares: fit.residualRmsDeg ** 2 * n,
  };
}

export interface LagSplit {
  offsetDeg: number | null;
  lagDeg: number | null;
  hysteresisDeg: number | null;
  latencyUs: number | null;
}

/** Least squares for a small dense system via normal equations; null when singular. */
function leastSquares(rows: number[][], y: number[]): number[] | null {
  const p = rows[0].length;
  const a = Array.from({ length: p }, () => new Array<number>(p).fill(0));
  const b = new Array<number>(p).fill(0);
  rows.forEach((r, i) => {
    for (let j = 0; j < p; j++) {
      b[j] += r[j] * y[i];
      for (let k = 0; k < p; k++) a[j][k] += r[j] * r[k];
    }
  });
  for (let c = 0; c < p; c++) {
    let piv = c;
    for (let r = c + 1; r < p; r++) if (Math.abs(a[r][c]) > Math.abs(a[piv][c])) piv = r;
    const scale = Math.max(...a.map((row) => Math.abs(row[c])));
    if (Math.abs(a[piv][c]) <= 1e-9 * (scale || 1)) return null;
    [a[c], a[piv]] = [a[piv], a[c]];
    [b[c], b[piv]] = [b[piv], b[c]];
    for (let r = c + 1; r < p; r++) {
      const f = a[r][c] / a[c][c];
      for (let k = c; k < p; k++) a[r][k] -= f * a[c][k];
      b[r] -= f * b[c];
    }
  }
  const x = new Array<number>(p).fill(0);
  for (let r = p - 1; r >= 0; r--) {
    let s = b[r];
    for (let k = r + 1; k < p; k++) s -= a[r][k] * x[k];
    x[r] = s / a[r][r];
  }
  return x;
}

/**
 * Separates geometric offset and lag. Forward measures g + lag, reverse g − lag; the lag is
 * h + 360°·fe·τ (hysteresis h, latency τ), so two or more speeds split it. With one direction only, the
 * offset is the circular mean of the segment offsets (lag included) and several speeds still give τ.
 */
export function separateLag(
  segments: ReadonlyArray<{ offsetDeg: number | null; sign: number; electricalHz: number }>,
): LagSplit {
  const usable = segments.filter(
    (s): s is { offsetDeg: number; sign: number; electricalHz: number } => s.offsetDeg !== null,
  );
  if (usable.length === 0) return { offsetDeg: null, lagDeg: null, hysteresisDeg: null, latencyUs: null };
  const ref = circularMeanDeg(usable.map((s) => s.offsetDeg)) ?? usable[0].offsetDeg;
  const o = usable.map((s) => ref + wrapDeg180(s.offsetDeg - ref));
  const fwd = usable.map((s, i) => (s.sign > 0 ? o[i] : NaN)).filter((v) => !Number.isNaN(v));
  const rev = usable.map((s, i) => (s.sign < 0 ? o[i] : NaN)).filter((v) => !Number.isNaN(v));
  const hz = usable.map((s) => s.electricalHz);
  const multiSpeed = Math.max(...hz) > 1.1 * Math.min(...hz);
  const mean = (v: number[]) => v.reduce((a, b) => a + b, 0) / v.length;
  // Latency term in degrees per µs of latency at each segment's speed.
  const latencyDegPerUs = hz.map((f) => 360 * f * 1e-6);
  if (fwd.length > 0 && rev.length > 0) {
    const lagDeg = (mean(fwd) - mean(rev)) / 2;
    let offsetDeg = (mean(fwd) + mean(rev)) / 2;
    let hysteresisDeg: number | null = null;
    let latencyUs: number | null = null;
    if (multiSpeed) {
      const x = leastSquares(
        usable.map((s, i) => [1, s.sign, s.sign * latencyDegPerUs[i]]),
        o,
      );
      if (x) {
        offsetDeg = x[0];
        hysteresisDeg = x[1];
        latencyUs = x[2];
      }
    }
    return { offsetDeg: wrapDeg180(offsetDeg), lagDeg, hysteresisDeg, latencyUs };
  }
  let latencyUs: number | null = null;
  if (multiSpeed) {
    const sign = fwd.length > 0 ? 1 : -1;
    const x = leastSquares(
      usable.map((_, i) => [1, sign * latencyDegPerUs[i]]),
      o,
    );
    if (x) latencyUs = x[1];
  }
  return { offsetDeg: wrapDeg180(mean(o)), lagDeg: null, hysteresisDeg: null, latencyUs };
}

/** Offset in firmware counts: round half away from zero; signed wraps into [−N/2, N/2), unsigned into [0, N). */
export function offsetToCounts(offsetDeg: number, countsPerTurn: number, signed: boolean): number {
  const x = (offsetDeg / 360) * countsPerTurn;
  let c = Math.sign(x) * Math.floor(Math.abs(x) + 0.5);
  if (signed) {
    if (c >= countsPerTurn / 2) c -= countsPerTurn;
    if (c < -countsPerTurn / 2) c += countsPerTurn;
  } else {
    c = ((c % countsPerTurn) + countsPerTurn) % countsPerTurn;
  }
  return c === 0 ? 0 : c;
}

function circMeanOrNull(values: (number | null)[]): number | null {
  const v = values.filter((x): x is number => x !== null);
  return v.length > 0 ? circularMeanDeg(v) : null;
}

/**
 * Calibrates one unit: validates the input (throws CalibrationInputError listing every problem), then
 * computes the offset, the figures engineers need, the checks and the verdict. Pure; no I/O.
 */
export function calibrate(
  measurement: Measurement,
  recipe: Recipe,
  options: EngineOptions = {},
): CalibrationResult {
  const valid = validateCalibrationInput(measurement, recipe);
  if (!valid.ok) throw new CalibrationInputError(valid.issues);
  const m = valid.measurement;
  const r = valid.recipe;
  const layout = deriveHallLayout(r.hallRiseDeg);
  const fitOptions: AngleFitOptions = { ...DEFAULT_ANGLE_FIT, ...options.angleFit };
  const works = m.segments.map((s, i) => processSegment(s, i, r, layout, fitOptions));

  const split = separateLag(
    works.map((w) => ({ offsetDeg: w.result.offsetDeg, sign: w.sign, electricalHz: w.result.electricalHz })),
  );
  const offsetDeg = split.offsetDeg;

  const edges: EdgeTypeResult[] = EDGE_TYPES.map((et, k) => {
    // Spread of single edges about their segment's offset: rotate each segment's sums by −offset, pool.
    let c = 0;
    let sn = 0;
    let n = 0;
    for (const w of works) {
      const o = w.result.offsetDeg;
      const t = w.typeSums[k];
      if (o === null || t.n === 0) continue;
      const cr = Math.cos(o * RAD);
      const sr = Math.sin(o * RAD);
      c += t.c * cr + t.s * sr;
      sn += t.s * cr - t.c * sr;
      n += t.n;
    }
    const r = n > 0 ? Math.min(1, Math.hypot(c, sn) / n) : 0;
    return {
      sensor: et.sensor,
      edge: et.edge,
      count: works.reduce((a, w) => a + w.typeCounts[k], 0),
      residualDeg: circMeanOrNull(works.map((w) => w.typeResiduals[k])),
      spreadDeg: n > 1 && r > 0 ? Math.sqrt(Math.max(0, -2 * Math.log(r))) / RAD : null,
    };
  });

  const sensors: SensorResult[] = SENSORS.map((s) => {
    const duty = works.map((w) => w.dutyPct[s]).filter((d): d is number => d !== null);
    const rise = edges[typeIndex(s, 'rise')].residualDeg;
    const fall = edges[typeIndex(s, 'fall')].residualDeg;
    return {
      sensor: s,
      edges: works.reduce((a, w) => a + w.sensorEdges[s], 0),
      bounceEdges: works.reduce((a, w) => a + w.bounce[s], 0),
      dutyPct: duty.length > 0 ? duty.reduce((a, b) => a + b, 0) / duty.length : null,
      placementDeg: rise !== null && fall !== null ? circularMeanDeg([rise, fall]) : (rise ?? fall),
    };
  });

  const spacing: SpacingResult[] = (
    [
      ['A', 'B'],
      ['B', 'C'],
      ['C', 'A'],
    ] as const
  ).map(([from, to]) => {
    const nominalDeg = wrapDeg360(r.hallRiseDeg[to] - r.hallRiseDeg[from]);
    const pf = sensors[SENSORS.indexOf(from)].placementDeg;
    const pt = sensors[SENSORS.indexOf(to)].placementDeg;
    const errorDeg = pf !== null && pt !== null ? wrapDeg180(pt - pf) : null;
    return { from, to, nominalDeg, measuredDeg: errorDeg === null ? null : nominalDeg + errorDeg, errorDeg };
  });

  let drive: DriveImpact | null = null;
  if (offsetDeg !== null) {
    // Each boundary's error is the offset plus its residual; a physical boundary is crossed by its
    // forward edge kind turning forward and by the other kind in reverse. The errors are laid on the
    // torque-optimal six-step boundaries so the figure shows what the measured errors cost, not the layout.
    const firstIdeal = Math.round((wrapDeg360(layout.boundaries[0].angleDeg) - 30) / 60);
    const boundaryDeg = layout.boundaries.map((b, k) => {
      const residual = circMeanOrNull(
        works.map((w) => {
          const kind: EdgeKind = w.sign > 0 ? b.forwardEdge : b.forwardEdge === 'rise' ? 'fall' : 'rise';
          return w.typeResiduals[typeIndex(b.sensor, kind)];
        }),
      );
      return IDEAL_SIX_STEP_BOUNDARIES_DEG[(firstIdeal + k + 6) % 6] + offsetDeg + (residual ?? 0);
    });
    const start = (6 - (((firstIdeal % 6) + 6) % 6)) % 6;
    const ordered = [...boundaryDeg.slice(start), ...boundaryDeg.slice(0, start)];
    const ideal = sixStepTorque(IDEAL_SIX_STEP_BOUNDARIES_DEG);
    const measured = sixStepTorque(ordered);
    const rad = (offsetDeg * Math.PI) / 180;
    drive = {
      torqueFactor: Math.cos(rad),
      dAxisShare: Math.sin(rad),
      sixStepRippleIdealPct: ideal.ripplePct,
      sixStepRippleMeasuredPct: measured.ripplePct,
      sixStepMeanTorqueRatio: measured.meanTorque / ideal.meanTorque,
    };
  }

  const totalDuration = works.reduce((a, w) => a + w.durationUs, 0);
  const electricalHz = works.reduce((a, w) => a + w.result.electricalHz * w.durationUs, 0) / totalDuration;
  const totalCrossings = works.reduce((a, w) => a + w.result.crossingsUsed, 0);
  const ppSpreads = works
    .map((w) => {
      const o = w.result.offsetDeg;
      const v = w.result.polePairOffsetsDeg.filter((x): x is number => x !== null);
      if (o === null || v.length < 2) return null;
      const d = v.map((x) => wrapDeg180(x - o));
      return Math.max(...d) - Math.min(...d);
    })
    .filter((x): x is number => x !== null);

  const base = {
    engineVersion: ENGINE_VERSION,
    measurementId: m.measurementId,
    serial: m.serial,
    offsetDeg,
    offsetCounts: offsetDeg === null ? null : offsetToCounts(offsetDeg, r.countsPerTurn, r.countsSigned),
    lagDeg: split.lagDeg,
    hysteresisDeg: split.hysteresisDeg,
    latencyUs: split.latencyUs,
    speedRpm: (electricalHz * 60) / r.polePairs,
    electricalHz,
    speedVariationPct: Math.max(...works.map((w) => w.result.speedVariationPct)),
    electricalTurns: works.reduce((a, w) => a + w.result.electricalTurns, 0),
    fitResidualDeg: Math.sqrt(works.reduce((a, w) => a + w.fitSquares, 0) / totalCrossings),
    polePairSpreadDeg: ppSpreads.length > 0 ? Math.max(...ppSpreads) : null,
    segments: works.map((w) => w.result),
    edges,
    sensors,
    spacing,
    validStates: layout.states,
    drive,
  };
  const checks: Check[] = buildChecks(base, works, r);
  return { ...base, verdict: verdictOf(checks), checks };
}
