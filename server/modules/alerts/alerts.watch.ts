import {
  chartConstants,
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
} from '#shared/statistics';
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
  /** X̄-R: the units of the subgroup being filled. */
  subgroup?: AlertPoint[];
  /** X̄-R: the units of the last subgroups judged (naming the units of a run). */
  recentGroups?: AlertPoint[][];
  /** The frozen limits (version id) the points since `count` 0 were judged against; null for the chart's own. */
  limitsId?: string | null;
}

export interface WatchSettings {
  kind: 'imr' | 'ewma' | 'xbar-r';
  ruleSet: RuleSet;
  rules: number[];
  lambda: number;
  limitWidth: number;
  /** X̄-R: consecutive units per subgroup. */
  subgroupSize?: number;
  /** Frozen limits in force for the station × model (centre and σ within, and the version's id). */
  frozen?: { id: string; center: number; sigma: number } | null;
}

/** The rule number an alert of a subgroup range outside its limits carries (run rules are 1–8). */
export const RANGE_RULE = 0;
export const RANGE_RULE_TEXT = 'Subgroup range outside its limits: the spread within a subgroup changed';

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
  const frozen = settings.frozen ?? null;
  // Limits changed (frozen, re-frozen or cleared): the run rules and the EWMA start again against them.
  if ((state.limitsId ?? null) !== (frozen?.id ?? null)) {
    state.limitsId = frozen?.id ?? null;
    restart(state, frozen ?? state.baseline);
  }
  let baseline: Baseline;
  if (frozen) baseline = { center: frozen.center, sigma: frozen.sigma };
  else if (state.baseline) baseline = state.baseline;
  else {
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
  const { center, sigma } = baseline;

  if (settings.kind === 'xbar-r') return subgroupStep(state, settings, point, baseline);

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
      clipForEwma(point.value, baseline),
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

/** Starts the run rules, the EWMA and any open subgroup again (new limits). */
function restart(state: WatchState, baseline: Baseline | null) {
  state.rules = createRuleState();
  state.count = 0;
  state.recent = [];
  state.subgroup = [];
  state.recentGroups = [];
  state.ewma = baseline ? { count: 0, z: baseline.center } : null;
}

/**
 * X̄-R: collects `subgroupSize` consecutive units, then judges the subgroup's mean with the run rules (σ of a
 * mean is σ/√n) and its range against D3·d2·σ and D4·d2·σ (the σ-known limits of the range chart).
 */
function subgroupStep(
  state: WatchState,
  settings: WatchSettings,
  point: AlertPoint,
  baseline: Baseline,
): { state: WatchState; hits: WatchHit[] } {
  const n = settings.subgroupSize ?? 5;
  const group = [...(state.subgroup ?? []), point];
  if (group.length < n) {
    state.subgroup = group;
    return { state, hits: [] };
  }
  state.subgroup = [];
  const groups = [...(state.recentGroups ?? []), group];
  if (groups.length > RECENT) groups.splice(0, groups.length - RECENT);
  state.recentGroups = groups;
  const index = state.count;
  state.count += 1;
  const values = group.map((p) => p.value);
  const mean = values.reduce((a, b) => a + b, 0) / n;
  const range = Math.max(...values) - Math.min(...values);
  const k = chartConstants(n);
  const hits: WatchHit[] = pushRulePoint(
    state.rules,
    { index, value: mean, z: (mean - baseline.center) / (baseline.sigma / Math.sqrt(n)) },
    settings.ruleSet,
    settings.rules,
  ).map((h) => ({
    rule: h.rule,
    ruleText: RULE_TEXT[settings.ruleSet][h.rule - 1],
    points: h.involved.flatMap((i) => groups[groups.length - 1 - (index - i)] ?? []),
  }));
  if (range > k.D4 * k.d2 * baseline.sigma || range < k.D3 * k.d2 * baseline.sigma)
    hits.push({ rule: RANGE_RULE, ruleText: RANGE_RULE_TEXT, points: group });
  return { state, hits };
}
