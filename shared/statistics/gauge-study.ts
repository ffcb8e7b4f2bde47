import { chartConstants } from './constants';
import { fUpperTail } from './distributions';

// Measurement-system analysis of a crossed gauge study: every part measured by every appraiser
// (a station or an operator) the same number of times. Two methods, as the AIAG MSA manual (4th ed.)
// describes them: the ANOVA method (two-way random-effects ANOVA with interaction) and the
// average-and-range method. Values keep the unit of the measurements (degrees for offsets).

/** data[part][appraiser][trial]: a balanced design, at least 2 parts, 2 appraisers and 2 trials. */
export type GaugeData = number[][][];

export interface AnovaRow {
  source: 'parts' | 'appraisers' | 'interaction' | 'repeatability' | 'total';
  df: number;
  ss: number;
  /** Mean square; absent for the total. */
  ms?: number;
  f?: number;
  p?: number;
}

export interface TwoWayAnova {
  parts: number;
  appraisers: number;
  trials: number;
  grandMean: number;
  rows: Record<AnovaRow['source'], AnovaRow>;
}

/** Where the spread of the study comes from, as standard deviations in the measurement's unit. */
export interface GaugeFigures {
  ev: number;
  av: number;
  interaction: number;
  grr: number;
  pv: number;
  tv: number;
  /** Percent of total variation (ratio of standard deviations × 100). */
  percentOfTv: { ev: number; av: number; interaction: number; grr: number; pv: number };
  /** 6σ_GRR as a percent of the tolerance (upper minus lower limit); absent without a tolerance. */
  percentOfTolerance?: { ev: number; av: number; grr: number; pv: number };
  /** Number of distinct categories, ⌊1.41 · PV / GRR⌋ (AIAG truncates to a whole number). */
  ndc: number;
}

export interface GaugeAnovaResult extends GaugeFigures {
  method: 'anova';
  anova: TwoWayAnova;
  /** True when the interaction was not significant and was pooled into repeatability. */
  interactionPooled: boolean;
  interactionP: number;
  /** The ANOVA table the components came from (pooled when the interaction was pooled). */
  table: AnovaRow[];
  variance: { repeatability: number; appraisers: number; interaction: number; parts: number };
}

export interface GaugeRangeResult extends GaugeFigures {
  method: 'average-and-range';
  k1: number;
  k2: number;
  k3: number;
  /** Mean of each appraiser's average range over parts. */
  averageRange: number;
  appraiserMeans: number[];
  appraiserAverageRanges: number[];
  partMeans: number[];
  /** Largest minus smallest appraiser mean. */
  appraiserDiff: number;
  /** Largest minus smallest part mean. */
  partRange: number;
}

export type GaugeReading = 'acceptable' | 'marginal' | 'unacceptable';

/** p-value above which the appraiser × part interaction is pooled (AIAG MSA 4th ed., from memory). */
export const INTERACTION_POOL_P = 0.25;
/** Spread of a normal process in standard deviations used for %tolerance (AIAG MSA 4th ed. uses 6σ, from memory). */
export const SPREAD_SIGMAS = 6;

export class GaugeDataError extends Error {}

function checkDesign(data: GaugeData): { p: number; o: number; r: number } {
  const p = data.length;
  const o = data[0]?.length ?? 0;
  const r = data[0]?.[0]?.length ?? 0;
  if (p < 2 || o < 2 || r < 2) {
    throw new GaugeDataError('A gauge study needs at least 2 parts, 2 appraisers and 2 trials.');
  }
  for (const part of data) {
    if (part.length !== o) throw new GaugeDataError('Every part needs a result from every appraiser.');
    for (const cell of part) {
      if (cell.length !== r)
        throw new GaugeDataError('Every appraiser needs the same number of trials on every part.');
      for (const v of cell)
        if (!Number.isFinite(v)) throw new GaugeDataError('Every result must be a number.');
    }
  }
  return { p, o, r };
}

const mean = (xs: number[]) => xs.reduce((a, b) => a + b, 0) / xs.length;
const range = (xs: number[]) => Math.max(...xs) - Math.min(...xs);

/**
 * Balanced two-way ANOVA with interaction and replication (rows "parts", columns "appraisers").
 * F and p here test each effect against the error mean square (fixed effects, as in a designed
 * experiment); the gauge study replaces them with the random-effects tests.
 */
export function twoWayAnova(data: GaugeData): TwoWayAnova {
  const { p, o, r } = checkDesign(data);
  const cellMeans = data.map((part) => part.map(mean));
  const partMeans = cellMeans.map(mean);
  const appraiserMeans = Array.from({ length: o }, (_, j) => mean(cellMeans.map((row) => row[j])));
  const grand = mean(partMeans);
  let ssE = 0;
  let ssT = 0;
  let ssPO = 0;
  for (let i = 0; i < p; i++) {
    for (let j = 0; j < o; j++) {
      for (const y of data[i][j]) {
        ssE += (y - cellMeans[i][j]) ** 2;
        ssT += (y - grand) ** 2;
      }
      ssPO += r * (cellMeans[i][j] - partMeans[i] - appraiserMeans[j] + grand) ** 2;
    }
  }
  const ssP = o * r * partMeans.reduce((a, m) => a + (m - grand) ** 2, 0);
  const ssO = p * r * appraiserMeans.reduce((a, m) => a + (m - grand) ** 2, 0);
  const dfP = p - 1;
  const dfO = o - 1;
  const dfPO = dfP * dfO;
  const dfE = p * o * (r - 1);
  const msE = ssE / dfE;
  const row = (source: AnovaRow['source'], df: number, ss: number): AnovaRow => {
    const ms = ss / df;
    const f = ms / msE;
    return { source, df, ss, ms, f, p: fUpperTail(f, df, dfE) };
  };
  return {
    parts: p,
    appraisers: o,
    trials: r,
    grandMean: grand,
    rows: {
      parts: row('parts', dfP, ssP),
      appraisers: row('appraisers', dfO, ssO),
      interaction: row('interaction', dfPO, ssPO),
      repeatability: { source: 'repeatability', df: dfE, ss: ssE, ms: msE },
      total: { source: 'total', df: p * o * r - 1, ss: ssT },
    },
  };
}

function figures(
  v: { repeatability: number; appraisers: number; interaction: number; parts: number },
  tolerance: number | undefined,
): GaugeFigures {
  const ev = Math.sqrt(v.repeatability);
  const av = Math.sqrt(v.appraisers);
  const interaction = Math.sqrt(v.interaction);
  const grr = Math.sqrt(v.repeatability + v.appraisers + v.interaction);
  const pv = Math.sqrt(v.parts);
  const tv = Math.sqrt(grr * grr + pv * pv);
  const pct = (s: number) => (tv > 0 ? (100 * s) / tv : 0);
  const tol = (s: number) => (100 * SPREAD_SIGMAS * s) / tolerance!;
  return {
    ev,
    av,
    interaction,
    grr,
    pv,
    tv,
    percentOfTv: { ev: pct(ev), av: pct(av), interaction: pct(interaction), grr: pct(grr), pv: pct(pv) },
    percentOfTolerance:
      tolerance && tolerance > 0 ? { ev: tol(ev), av: tol(av), grr: tol(grr), pv: tol(pv) } : undefined,
    ndc: grr > 0 ? Math.max(0, Math.floor((1.41 * pv) / grr)) : Infinity,
  };
}

/**
 * The ANOVA method (AIAG MSA 4th ed., from memory; the same expected mean squares as Montgomery,
 * Introduction to Statistical Quality Control, gauge R&R with random effects):
 *   parts and appraisers are tested against the interaction mean square, the interaction against error;
 *   when the interaction's p exceeds 0.25 it is pooled with error (SS and df added) and both main effects
 *   are tested against the pooled mean square.
 *   σ²_repeat = MS_E, σ²_int = (MS_PO − MS_E)/r, σ²_appr = (MS_O − MS_PO)/(p r), σ²_part = (MS_P − MS_PO)/(o r);
 *   a negative estimate is set to zero.
 * `tolerance` is the width of the specification (upper minus lower limit), same unit as the data.
 */
export function gaugeAnova(data: GaugeData, opts: { tolerance?: number } = {}): GaugeAnovaResult {
  const anova = twoWayAnova(data);
  const { parts: P, appraisers: O, interaction: PO, repeatability: E, total } = anova.rows;
  const p = anova.parts;
  const o = anova.appraisers;
  const r = anova.trials;
  const interactionP = fUpperTail(PO.ms! / E.ms!, PO.df, E.df);
  const pooled = interactionP > INTERACTION_POOL_P;
  let table: AnovaRow[];
  let v: GaugeAnovaResult['variance'];
  if (pooled) {
    const df = PO.df + E.df;
    const ms = (PO.ss + E.ss) / df;
    const test = (row: AnovaRow): AnovaRow => {
      const f = row.ms! / ms;
      return { ...row, f, p: fUpperTail(f, row.df, df) };
    };
    table = [test(P), test(O), { source: 'repeatability', df, ss: PO.ss + E.ss, ms }, total];
    v = {
      repeatability: ms,
      appraisers: Math.max(0, (O.ms! - ms) / (p * r)),
      interaction: 0,
      parts: Math.max(0, (P.ms! - ms) / (o * r)),
    };
  } else {
    const test = (row: AnovaRow, against: AnovaRow): AnovaRow => {
      const f = row.ms! / against.ms!;
      return { ...row, f, p: fUpperTail(f, row.df, against.df) };
    };
    table = [test(P, PO), test(O, PO), test(PO, E), E, total];
    v = {
      repeatability: E.ms!,
      appraisers: Math.max(0, (O.ms! - PO.ms!) / (p * r)),
      interaction: Math.max(0, (PO.ms! - E.ms!) / r),
      parts: Math.max(0, (P.ms! - PO.ms!) / (o * r)),
    };
  }
  return {
    method: 'anova',
    anova,
    interactionPooled: pooled,
    interactionP,
    table,
    variance: v,
    ...figures(v, opts.tolerance),
  };
}

/**
 * d2* for ranges of m values, g = 1 range: the root mean square of the relative range, √(d2² + d3²)
 * (E[W²] = Var W + (E W)²). This is the g = 1 column of Duncan's d2* table that the AIAG K2 and K3
 * constants come from.
 */
export function d2StarSingle(m: number): number {
  const { d2, d3 } = chartConstants(m);
  return Math.sqrt(d2 * d2 + d3 * d3);
}

/**
 * The average-and-range constants (AIAG MSA 4th ed., from memory): K1 = 1/d2* for the trials with
 * g = parts × appraisers ranges, which the manual takes as large (> 15) so d2* ≈ d2; K2 = 1/d2* for the
 * appraisers and K3 = 1/d2* for the parts, each with one range (g = 1).
 */
export function averageRangeConstants(trials: number, appraisers: number, parts: number) {
  return {
    k1: 1 / chartConstants(trials).d2,
    k2: 1 / d2StarSingle(appraisers),
    k3: 1 / d2StarSingle(parts),
  };
}

/**
 * The average-and-range method: EV = R̿·K1; AV = √((X̄diff·K2)² − EV²/(n r)) (0 when negative);
 * GRR = √(EV² + AV²); PV = Rp·K3; TV = √(GRR² + PV²). It has no interaction term.
 */
export function gaugeAverageRange(data: GaugeData, opts: { tolerance?: number } = {}): GaugeRangeResult {
  const { p, o, r } = checkDesign(data);
  const { k1, k2, k3 } = averageRangeConstants(r, o, p);
  const appraiserAverageRanges = Array.from({ length: o }, (_, j) =>
    mean(data.map((part) => range(part[j]))),
  );
  const appraiserMeans = Array.from({ length: o }, (_, j) => mean(data.map((part) => mean(part[j]))));
  const partMeans = data.map((part) => mean(part.map(mean)));
  const averageRange = mean(appraiserAverageRanges);
  const appraiserDiff = range(appraiserMeans);
  const partRange = range(partMeans);
  const ev = averageRange * k1;
  const av = Math.sqrt(Math.max(0, (appraiserDiff * k2) ** 2 - (ev * ev) / (p * r)));
  const pv = partRange * k3;
  return {
    method: 'average-and-range',
    k1,
    k2,
    k3,
    averageRange,
    appraiserMeans,
    appraiserAverageRanges,
    partMeans,
    appraiserDiff,
    partRange,
    ...figures(
      { repeatability: ev * ev, appraisers: av * av, interaction: 0, parts: pv * pv },
      opts.tolerance,
    ),
  };
}

/**
 * The usual reading of %GRR (of total variation, or of tolerance when that is the purpose): under 10 %
 * acceptable, 10–30 % may be acceptable depending on the use, over 30 % not acceptable; and at least 5
 * distinct categories (AIAG MSA 4th ed., from memory).
 */
export function readGauge(percentGrr: number, ndc: number): { reading: GaugeReading; sentence: string } {
  const cats =
    ndc >= 5
      ? `it tells ${Number.isFinite(ndc) ? ndc : 'many'} categories of parts apart (5 or more are wanted)`
      : `it tells only ${ndc} categor${ndc === 1 ? 'y' : 'ies'} of parts apart (5 or more are wanted)`;
  const pct = `${percentGrr.toFixed(1)} %`;
  if (percentGrr < 10 && ndc >= 5) {
    return {
      reading: 'acceptable',
      sentence: `The measurement system is acceptable: GRR is ${pct} and ${cats}.`,
    };
  }
  if (percentGrr <= 30) {
    return {
      reading: 'marginal',
      sentence: `The measurement system may be acceptable depending on its use: GRR is ${pct} and ${cats}.`,
    };
  }
  return {
    reading: 'unacceptable',
    sentence: `The measurement system is not acceptable: GRR is ${pct} and ${cats}. Improve the station before relying on it.`,
  };
}

/** Mean and expanded uncertainty (k = 2) of repeated measurements of one reference unit. */
export function certifiedValue(values: number[]): {
  mean: number;
  sd: number;
  n: number;
  expandedUncertainty: number;
} {
  if (values.length < 2 || values.some((v) => !Number.isFinite(v))) {
    throw new GaugeDataError('Certifying a value needs at least 2 numeric measurements.');
  }
  const m = mean(values);
  const sd = Math.sqrt(values.reduce((a, v) => a + (v - m) ** 2, 0) / (values.length - 1));
  // Type A standard uncertainty of the mean s/√n, coverage factor k = 2 (GUM, JCGM 100:2008, about 95 %).
  return { mean: m, sd, n: values.length, expandedUncertainty: (2 * sd) / Math.sqrt(values.length) };
}
