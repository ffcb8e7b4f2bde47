import type {
  BemfChannel,
  BemfCrossing,
  Direction,
  HallEdge,
  HallSensor,
  Measurement,
} from '../schemas/measurement';
import type { Recipe } from '../schemas/recipe';
import type { CalibrationResult, CaptureFigures, Check } from '../schemas/calibration-result';
import { CalibrationInputError, type InputIssue } from '../calibration/input';
import { calibrate, type EngineOptions } from '../calibration/engine';
import { verdictOf } from '../calibration/checks';
import { DEFAULT_ANGLE_FIT, crossingDirection, fitAngle, unwrapCrossings } from '../calibration/angle-fit';
import { deriveHallLayout } from '../calibration/hall-layout';
import { walkHallStates } from '../calibration/hall-edges';
import { recipeSchema } from '../schemas/recipe';
import { parseNumericCsv, type NumericTable } from './csv';
import { fft } from './fft';

/**
 * Sampled captures: a CSV with `time_s`, back-EMF voltages (`va,vb,vc` phase, or `vab,vbc,vca` line to
 * line) and hall levels (`ha,hb,hc`), in any column order with a header row (without one, the order
 * time_s, va, vb, vc, ha, hb, hc is assumed). It becomes the same edges and crossings the engine takes,
 * plus back-EMF figures: amplitude per channel, Ke, harmonic distortion and phase balance.
 */

export interface CaptureSignals {
  channels: 'phase' | 'line';
  /** Sample times, µs. */
  tUs: Float64Array;
  /** Back-EMF voltages per channel (phase channels referenced to their virtual neutral), V. */
  volts: [Float64Array, Float64Array, Float64Array];
  halls: [Float64Array, Float64Array, Float64Array];
}

const PHASE_COLUMNS = ['va', 'vb', 'vc'];
const LINE_COLUMNS = ['vab', 'vbc', 'vca'];
const HALL_COLUMNS = ['ha', 'hb', 'hc'];
const TIME_COLUMNS = ['time_s', 'time', 't', 't_s'];

/** Picks the capture's columns by name; lists everything that is missing. */
export function captureSignals(table: NumericTable): CaptureSignals {
  const cols = table.hasHeader
    ? table.columns
    : table.columns.length === 7
      ? ['time_s', ...PHASE_COLUMNS, ...HALL_COLUMNS]
      : [];
  if (cols.length === 0) {
    throw new CalibrationInputError([
      {
        path: 'capture.header',
        message: `a capture without a header must have the 7 columns time_s, va, vb, vc, ha, hb, hc (found ${table.columns.length})`,
      },
    ]);
  }
  const find = (names: string[]) => names.map((n) => cols.indexOf(n));
  const issues: InputIssue[] = [];
  const timeIdx = TIME_COLUMNS.map((n) => cols.indexOf(n)).find((i) => i >= 0) ?? -1;
  if (timeIdx < 0) issues.push({ path: 'capture.header', message: 'no time column (time_s, in seconds)' });
  const phase = find(PHASE_COLUMNS);
  const line = find(LINE_COLUMNS);
  const usePhase = phase.every((i) => i >= 0);
  const useLine = !usePhase && line.every((i) => i >= 0);
  if (!usePhase && !useLine) {
    issues.push({
      path: 'capture.header',
      message: `needs back-EMF columns va, vb, vc or vab, vbc, vca (found: ${cols.filter((c) => c !== '').join(', ') || 'none'})`,
    });
  }
  const hall = find(HALL_COLUMNS);
  const missingHall = HALL_COLUMNS.filter((_, k) => hall[k] < 0);
  if (missingHall.length > 0)
    issues.push({ path: 'capture.header', message: `missing hall columns: ${missingHall.join(', ')}` });
  if (issues.length > 0) throw new CalibrationInputError(issues);
  const time = table.data[timeIdx];
  const n = table.rows;
  const tUs = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    tUs[i] = time[i] * 1e6;
    if (i > 0 && !(tUs[i] > tUs[i - 1])) {
      throw new CalibrationInputError([
        {
          path: `capture.row ${i + 1}`,
          message: `time_s must increase from row to row (${time[i]} after ${time[i - 1]})`,
        },
      ]);
    }
  }
  if (n < 16)
    throw new CalibrationInputError([
      { path: 'capture', message: `only ${n} samples; a capture needs many turns` },
    ]);
  const idx = usePhase ? phase : line;
  const volts = idx.map((i) => Float64Array.from(table.data[i])) as [
    Float64Array,
    Float64Array,
    Float64Array,
  ];
  if (usePhase) {
    // Reference the phases to their virtual neutral: removes any common-mode or ground offset.
    const [a, b, c] = volts;
    for (let i = 0; i < n; i++) {
      const m = (a[i] + b[i] + c[i]) / 3;
      a[i] -= m;
      b[i] -= m;
      c[i] -= m;
    }
  }
  const halls = hall.map((i) => table.data[i]) as [Float64Array, Float64Array, Float64Array];
  return { channels: usePhase ? 'phase' : 'line', tUs, volts, halls };
}

/** Hall edges: level = above the midpoint of the column's range; an edge sits halfway between the two samples. */
export function hallEdgesFromSamples(signals: CaptureSignals): HallEdge[] {
  const edges: HallEdge[] = [];
  const sensors: HallSensor[] = ['A', 'B', 'C'];
  const { tUs } = signals;
  signals.halls.forEach((h, k) => {
    let lo = Infinity;
    let hi = -Infinity;
    for (let i = 0; i < h.length; i++) {
      if (h[i] < lo) lo = h[i];
      if (h[i] > hi) hi = h[i];
    }
    if (!(hi - lo > 0)) return;
    const mid = (lo + hi) / 2;
    let level = h[0] > mid;
    for (let i = 1; i < h.length; i++) {
      const now = h[i] > mid;
      if (now !== level) {
        edges.push({ sensor: sensors[k], edge: now ? 'rise' : 'fall', us: (tUs[i - 1] + tUs[i]) / 2 });
        level = now;
      }
    }
  });
  return edges.sort((x, y) => x.us - y.us);
}

/**
 * Zero crossings with hysteresis: a crossing is declared only when the signal goes from below −band to
 * above +band (or back), so noise chatter near zero yields one crossing. Its time is the zero of a
 * least-squares line through the samples inside the band (linear interpolation when there are two).
 */
export function crossingsFromSamples(signals: CaptureSignals, bandFraction = 0.1): BemfCrossing[] {
  const names: BemfChannel[] = signals.channels === 'phase' ? ['A', 'B', 'C'] : ['AB', 'BC', 'CA'];
  const out: BemfCrossing[] = [];
  const t = signals.tUs;
  signals.volts.forEach((v, k) => {
    let peak = 0;
    for (let i = 0; i < v.length; i++) peak = Math.max(peak, Math.abs(v[i]));
    const band = bandFraction * peak;
    if (!(band > 0)) return;
    let state = 0;
    let lastOutside = -1;
    for (let i = 0; i < v.length; i++) {
      const x = v[i];
      const side = x > band ? 1 : x < -band ? -1 : 0;
      if (side === 0) continue;
      if (state !== 0 && side !== state && lastOutside >= 0) {
        const from = lastOutside;
        const t0 = t[from];
        let sx = 0;
        let sy = 0;
        let sxx = 0;
        let sxy = 0;
        const m = i - from + 1;
        for (let j = from; j <= i; j++) {
          const dt = t[j] - t0;
          sx += dt;
          sy += v[j];
          sxx += dt * dt;
          sxy += dt * v[j];
        }
        const slope = (m * sxy - sx * sy) / (m * sxx - sx * sx);
        const icept = (sy - slope * sx) / m;
        const tc = t0 - icept / slope;
        if (Number.isFinite(tc))
          out.push({
            channel: names[k],
            edge: side > 0 ? 'rise' : 'fall',
            us: Math.min(t[i], Math.max(t[from], tc)),
          });
      }
      state = side;
      lastOutside = i;
    }
  });
  return out.sort((x, y) => x.us - y.us);
}

export interface CaptureOptions {
  /** Direction the station drove; when absent it is taken from the hall sequence. */
  direction?: Direction;
  measurementId?: string;
  serial?: string;
  /** Hysteresis band of the crossing detector, fraction of the channel's peak voltage. */
  bandFraction?: number;
  /** Highest harmonic in the distortion figure. */
  maxHarmonic?: number;
}

/** Turns a parsed capture into a one-segment measurement (edges and crossings). */
export function captureToMeasurement(
  signals: CaptureSignals,
  recipe: Recipe,
  options: CaptureOptions = {},
): Measurement {
  const hallEdges = hallEdgesFromSamples(signals);
  const bemfCrossings = crossingsFromSamples(signals, options.bandFraction);
  let direction = options.direction;
  if (!direction) {
    const walk = walkHallStates(hallEdges, deriveHallLayout(recipe.hallRiseDeg));
    const bemf = crossingDirection(bemfCrossings);
    direction = (walk.direction || bemf) < 0 ? 'reverse' : 'forward';
  }
  return {
    measurementId: options.measurementId ?? 'capture',
    serial: options.serial ?? 'unknown',
    segments: [{ direction, hallEdges, bemfCrossings }],
  };
}

const PER_TURN = 128;

/**
 * Back-EMF figures in the angle domain: each sample's voltage is divided by the local electrical speed
 * (so coast-down does not smear the spectrum), resampled onto PER_TURN points per electrical turn and
 * transformed turn by turn with the FFT; complex coefficients are averaged over whole turns.
 */
export function captureFigures(
  signals: CaptureSignals,
  measurement: Measurement,
  recipe: Recipe,
  maxHarmonic = 15,
): CaptureFigures | null {
  const seg = measurement.segments[0];
  const sign = crossingDirection(seg.bemfCrossings) || (seg.direction === 'forward' ? 1 : -1);
  const track = unwrapCrossings(seg.bemfCrossings, 0, sign);
  if (track.tUs.length < 8) return null;
  const fit = fitAngle(track, DEFAULT_ANGLE_FIT);
  const { tUs, volts } = signals;
  const n = tUs.length;
  // φ = travelled angle (increasing), u = v / fe (V per electrical Hz).
  const phi = new Float64Array(n);
  const hz = new Float64Array(n);
  let first = -1;
  let last = -1;
  for (let i = 0; i < n; i++) {
    const th = fit.thetaAt(tUs[i]);
    if (Number.isNaN(th)) {
      phi[i] = NaN;
      continue;
    }
    phi[i] = sign * th;
    hz[i] = (Math.abs(fit.rateAt(tUs[i])) * 1e6) / 360;
    if (first < 0) first = i;
    last = i;
  }
  if (first < 0) return null;
  const startTurn = Math.ceil(phi[first] / 360);
  const turns = Math.floor(phi[last] / 360) - startTurn;
  if (turns < 1) return null;
  const H = Math.min(maxHarmonic, PER_TURN / 2 - 1);
  const coef = volts.map(() => ({ re: new Float64Array(H + 1), im: new Float64Array(H + 1) }));
  const re = new Float64Array(PER_TURN);
  const im = new Float64Array(PER_TURN);
  volts.forEach((v, ch) => {
    let j = first;
    for (let turn = 0; turn < turns; turn++) {
      for (let g = 0; g < PER_TURN; g++) {
        const target = (startTurn + turn) * 360 + (g * 360) / PER_TURN;
        while (j + 1 <= last && phi[j + 1] < target) j++;
        const a = phi[j];
        const b = phi[j + 1];
        const w = b > a ? (target - a) / (b - a) : 0;
        re[g] = (v[j] / hz[j]) * (1 - w) + (v[j + 1] / hz[j + 1]) * w;
        im[g] = 0;
      }
      fft(re, im);
      for (let h = 1; h <= H; h++) {
        coef[ch].re[h] += re[h] / turns;
        coef[ch].im[h] += im[h] / turns;
      }
      j = Math.max(first, j - 2);
    }
  });
  const amp = (ch: number, h: number) => (2 * Math.hypot(coef[ch].re[h], coef[ch].im[h])) / PER_TURN;
  const meanHz =
    (seg.bemfCrossings.length > 0 ? Math.abs(phi[last] - phi[first]) / (tUs[last] - tUs[first]) : 0) *
    (1e6 / 360);
  const amplitudeV = [0, 1, 2].map((ch) => amp(ch, 1) * meanHz);
  const thdPct = [0, 1, 2].map((ch) => {
    let s = 0;
    for (let h = 2; h <= H; h++) s += amp(ch, h) ** 2;
    return (100 * Math.sqrt(s)) / amp(ch, 1);
  });
  // Line-to-line fundamentals (V per electrical Hz): the channels themselves, or differences of the phases.
  const c1 = [0, 1, 2].map((ch) => ({ re: coef[ch].re[1], im: coef[ch].im[1] }));
  const lineAmp =
    signals.channels === 'line'
      ? [0, 1, 2].map((ch) => amp(ch, 1))
      : [0, 1, 2].map((ch) => {
          const b = c1[(ch + 1) % 3];
          return (2 * Math.hypot(c1[ch].re - b.re, c1[ch].im - b.im)) / PER_TURN;
        });
  const hzPerKrpm = (1000 * recipe.polePairs) / 60;
  const keVPerKrpmPeak = (lineAmp.reduce((a, b) => a + b, 0) / 3) * hzPerKrpm;
  const phases = c1.map((c) => (Math.atan2(c.im, c.re) * 180) / Math.PI);
  let spacing = 0;
  for (let ch = 0; ch < 3; ch++) {
    const d = ((((phases[(ch + 1) % 3] - phases[ch]) % 360) + 540) % 360) - 180;
    spacing = Math.max(spacing, Math.abs(Math.abs(d) - 120));
  }
  const maxA = Math.max(...amplitudeV);
  const minA = Math.min(...amplitudeV);
  return {
    channels: signals.channels,
    samples: n,
    sampleRateHz: ((n - 1) / (tUs[n - 1] - tUs[0])) * 1e6,
    amplitudeV,
    keVPerKrpmPeak,
    keVPerKrpmRms: keVPerKrpmPeak / Math.SQRT2,
    thdPct,
    maxHarmonic: H,
    amplitudeImbalancePct: (100 * (maxA - minA)) / (amplitudeV.reduce((a, b) => a + b, 0) / 3),
    spacingImbalanceDeg: spacing,
  };
}

export interface CaptureCalibration {
  measurement: Measurement;
  result: CalibrationResult;
}

/**
 * Calibrates a sampled CSV capture: parse, extract edges and crossings, run the engine, add the back-EMF
 * figures (and the Ke check when the recipe sets a Ke window). Throws CalibrationInputError for unusable input.
 */
export function calibrateCapture(
  csvText: string | Uint8Array,
  recipe: Recipe,
  options: CaptureOptions = {},
  engineOptions: EngineOptions = {},
): CaptureCalibration {
  const parsedRecipe = recipeSchema.safeParse(recipe);
  if (!parsedRecipe.success) {
    throw new CalibrationInputError(
      parsedRecipe.error.issues.map((i) => ({
        path: ['recipe', ...i.path.map(String)].join('.'),
        message: i.message,
      })),
    );
  }
  const signals = captureSignals(parseNumericCsv(csvText));
  const measurement = captureToMeasurement(signals, parsedRecipe.data, options);
  // Crossings found in the waveform itself carry no detector delay.
  const result = calibrate(measurement, { ...parsedRecipe.data, bemfDelayUs: 0 }, engineOptions);
  const figures = captureFigures(signals, measurement, parsedRecipe.data, options.maxHarmonic);
  if (!figures) return { measurement, result };
  const checks: Check[] = [...result.checks];
  const window = parsedRecipe.data.limits.keVPerKrpm;
  if (window) {
    const ke = figures.keVPerKrpmPeak;
    const ok = ke >= window[0] && ke <= window[1];
    checks.push({
      code: 'capture.ke_within_limits',
      passed: ok,
      value: ke,
      limit: window,
      unit: 'V/krpm',
      message: ok
        ? `Back-EMF constant ${ke.toFixed(2)} V/krpm is inside ${window[0]} to ${window[1]} V/krpm.`
        : `Back-EMF constant ${ke.toFixed(2)} V/krpm is outside ${window[0]} to ${window[1]} V/krpm: wrong magnets, wrong winding or a weak rotor.`,
    });
  }
  return { measurement, result: { ...result, capture: figures, checks, verdict: verdictOf(checks) } };
}
