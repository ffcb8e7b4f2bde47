import {
  clipForEwma,
  createRuleState,
  ewmaSigma,
  ewmaStep,
  individualsChart,
  pushRulePoint,
  RULE_TEXT,
  type Baseline,
  type EwmaState,
  type RuleSet,
  type RuleState,
} from '../../../shared/statistics';
import type { AlertPoint } from './alerts.table';

/** Points collected before the limits of a new watched chart are fixed from them. */
export const BASELINE_POINTS = 30;
/** Points kept in the state for naming the units of a run (the longest rule window). */
const RECENT = 15;

export interface WatchState {
  /** Values (and their calibrations) collected until the baseline is fixed. */
  warmup: { value: number; calibrationId: string }[];
  baseline: Baseline | null;
  /** Points judged since the baseline was fixed. */
  count: number;
  rules: RuleState;
  ewma: EwmaState | null;
  recent: AlertPoint[];
  /** The last calibration taken in (computed time and id): the next run starts after it. */
  cursor: { at: string; id: string } | null;
}

export interface WatchSettings {
  kind: 'imr' | 'ewma';
  ruleSet: RuleSet;
  rules: number[];
  lambda: number;
  limitWidth: number;
}

export interface WatchHit {
  rule: number;
  ruleText: string;
  points: AlertPoint[];
}

export const EWMA_RULE_TEXT = [
  'EWMA above its upper limit: the process drifted up',
  'EWMA below its lower limit: the process drifted down',
];

export function initialWatchState(): WatchState {
  return {
    warmup: [],
    baseline: null,
    count: 0,
    rules: createRuleState(),
    ewma: null,
    recent: [],
    cursor: null,
  };
}

/** True when this calibration was already taken in (a retried job must not count it twice). */
export function alreadySeen(state: WatchState, calibrationId: string): boolean {
  return (
    state.recent.some((p) => p.calibrationId === calibrationId) ||
    state.warmup.some((p) => p.calibrationId === calibrationId)
  );
}

/**
 * Takes one new point into a watched chart: pure, returns the next state and the rules the point completes.
 * Until BASELINE_POINTS values are in, they only collect; then the centre and σ within (MR̄/d2) are fixed and
 * every later point is judged against them, using only the state (never the history).
 */
export function watchStep(
  previous: WatchState,
  settings: WatchSettings,
  point: AlertPoint,
): { state: WatchState; hits: WatchHit[] } {
  const state: WatchState = structuredClone(previous);
  state.cursor = { at: point.at, id: point.calibrationId };
  if (!state.baseline) {
    state.warmup.push({ value: point.value, calibrationId: point.calibrationId });
    if (state.warmup.length >= BASELINE_POINTS) {
      const chart = individualsChart(state.warmup.map((w) => w.value));
      if (chart && chart.baseline.sigma > 0) {
        state.baseline = chart.baseline;
        state.ewma = { count: 0, z: chart.baseline.center };
        state.warmup = [];
      }
    }
    return { state, hits: [] };
  }
  const { center, sigma } = state.baseline;
  state.recent.push(point);
  if (state.recent.length > RECENT) state.recent.splice(0, state.recent.length - RECENT);
  const index = state.count;
  state.count += 1;
  const byIndex = (involved: number[]) =>
    involved
      .map((i) => state.recent[state.recent.length - 1 - (index - i)])
      .filter((p): p is AlertPoint => !!p);

  if (settings.kind === 'ewma') {
    const ewma = ewmaStep(
      state.ewma ?? { count: 0, z: center },
      clipForEwma(point.value, state.baseline),
      settings.lambda,
    );
    state.ewma = ewma;
    const s = ewmaSigma(sigma, settings.lambda, ewma.count);
    const hits: WatchHit[] = [];
    if (ewma.z > center + settings.limitWidth * s)
      hits.push({ rule: 1, ruleText: EWMA_RULE_TEXT[0], points: [point] });
    if (ewma.z < center - settings.limitWidth * s)
      hits.push({ rule: 2, ruleText: EWMA_RULE_TEXT[1], points: [point] });
    return { state, hits };
  }
  const hits = pushRulePoint(
    state.rules,
    { index, value: point.value, z: (point.value - center) / sigma },
    settings.ruleSet,
    settings.rules,
  ).map((h) => ({
    rule: h.rule,
    ruleText: RULE_TEXT[settings.ruleSet][h.rule - 1],
    points: byIndex(h.involved),
  }));
  return { state, hits };
}
