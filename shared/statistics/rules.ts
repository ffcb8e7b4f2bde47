// Run rules for control charts, evaluated point by point so that a chart can be watched incrementally: the
// state keeps only the last 15 points (the longest window of any rule), never the history.
//
// Western Electric, Statistical Quality Control Handbook (1956):
//   1 one point beyond 3σ · 2 two of three beyond 2σ on one side · 3 four of five beyond 1σ on one side ·
//   4 eight in a row on one side of the centre line
// Nelson, "The Shewhart control chart — tests for special causes", J. Quality Technology 16(4), 1984:
//   1 one point beyond 3σ · 2 nine in a row on one side · 3 six in a row steadily increasing or decreasing ·
//   4 fourteen in a row alternating up and down · 5 two of three beyond 2σ on one side · 6 four of five beyond
//   1σ on one side · 7 fifteen in a row within 1σ (either side) · 8 eight in a row beyond 1σ (either side)
//
// "Beyond kσ" is strictly more than k standard deviations of the plotted statistic from the centre line; a point
// exactly on the centre line belongs to neither side. The window rules (2 of 3, 4 of 5) fire on a point that is
// itself one of the points beyond, so a run is reported where it completes. Trend and alternation (Nelson 3, 4)
// compare the plotted values; equal neighbours break them.

export type RuleSet = 'western-electric' | 'nelson';

export const RULE_COUNT: Record<RuleSet, number> = { 'western-electric': 4, nelson: 8 };

export const RULE_TEXT: Record<RuleSet, readonly string[]> = {
  'western-electric': [
    'One point beyond 3 standard deviations',
    'Two of three points beyond 2 standard deviations on the same side',
    'Four of five points beyond 1 standard deviation on the same side',
    'Eight points in a row on the same side of the centre line',
  ],
  nelson: [
    'One point beyond 3 standard deviations',
    'Nine points in a row on the same side of the centre line',
    'Six points in a row steadily increasing or decreasing',
    'Fourteen points in a row alternating up and down',
    'Two of three points beyond 2 standard deviations on the same side',
    'Four of five points beyond 1 standard deviation on the same side',
    'Fifteen points in a row within 1 standard deviation',
    'Eight points in a row more than 1 standard deviation from the centre line, either side',
  ],
};

export interface RulePoint {
  /** Caller's index or id of the point (e.g. its position in the chart). */
  index: number;
  /** The plotted value. */
  value: number;
  /** (value − centre) / σ of the plotted statistic. */
  z: number;
}

export interface RuleHit {
  rule: number;
  /** The point at which the rule fired. */
  index: number;
  /** Every point of the run or window that made it fire, oldest first. */
  involved: number[];
}

export interface RuleState {
  recent: RulePoint[];
}

const WINDOW = 15;

export function createRuleState(): RuleState {
  return { recent: [] };
}

function lastN(points: readonly RulePoint[], n: number): RulePoint[] | null {
  return points.length >= n ? points.slice(points.length - n) : null;
}

function beyond(p: RulePoint, k: number, side: 1 | -1): boolean {
  return side * p.z > k;
}

function kOfM(points: readonly RulePoint[], k: number, m: number, sigmas: number): RulePoint[] | null {
  const win = lastN(points, m);
  if (!win) return null;
  const current = win[m - 1];
  for (const side of [1, -1] as const) {
    if (!beyond(current, sigmas, side)) continue;
    const hits = win.filter((p) => beyond(p, sigmas, side));
    if (hits.length >= k) return hits;
  }
  return null;
}

function sameSide(points: readonly RulePoint[], n: number): RulePoint[] | null {
  const win = lastN(points, n);
  if (!win) return null;
  if (win.every((p) => p.z > 0) || win.every((p) => p.z < 0)) return win;
  return null;
}

function trend(points: readonly RulePoint[], n: number): RulePoint[] | null {
  const win = lastN(points, n);
  if (!win) return null;
  let up = true;
  let down = true;
  for (let i = 1; i < n; i++) {
    if (!(win[i].value > win[i - 1].value)) up = false;
    if (!(win[i].value < win[i - 1].value)) down = false;
  }
  return up || down ? win : null;
}

function alternating(points: readonly RulePoint[], n: number): RulePoint[] | null {
  const win = lastN(points, n);
  if (!win) return null;
  for (let i = 1; i < n; i++) {
    const d = win[i].value - win[i - 1].value;
    if (d === 0) return null;
    if (i >= 2) {
      const prev = win[i - 1].value - win[i - 2].value;
      if (Math.sign(d) === Math.sign(prev)) return null;
    }
  }
  return win;
}

function all(points: readonly RulePoint[], n: number, test: (p: RulePoint) => boolean): RulePoint[] | null {
  const win = lastN(points, n);
  return win && win.every(test) ? win : null;
}

type RuleCheck = (points: readonly RulePoint[]) => RulePoint[] | null;

const beyond3: RuleCheck = (pts) => {
  const p = pts[pts.length - 1];
  return Math.abs(p.z) > 3 ? [p] : null;
};

const CHECKS: Record<RuleSet, readonly RuleCheck[]> = {
  'western-electric': [beyond3, (p) => kOfM(p, 2, 3, 2), (p) => kOfM(p, 4, 5, 1), (p) => sameSide(p, 8)],
  nelson: [
    beyond3,
    (p) => sameSide(p, 9),
    (p) => trend(p, 6),
    (p) => alternating(p, 14),
    (p) => kOfM(p, 2, 3, 2),
    (p) => kOfM(p, 4, 5, 1),
    (p) => all(p, 15, (q) => Math.abs(q.z) < 1),
    (p) => all(p, 8, (q) => Math.abs(q.z) > 1),
  ],
};

/** Adds one point to the state and returns the rules it completes. The state is updated in place. */
export function pushRulePoint(
  state: RuleState,
  point: RulePoint,
  ruleSet: RuleSet,
  rules: readonly number[] = allRules(ruleSet),
): RuleHit[] {
  state.recent.push(point);
  if (state.recent.length > WINDOW) state.recent.splice(0, state.recent.length - WINDOW);
  const hits: RuleHit[] = [];
  for (const rule of rules) {
    const check = CHECKS[ruleSet][rule - 1];
    if (!check) continue;
    const involved = check(state.recent);
    if (involved) hits.push({ rule, index: point.index, involved: involved.map((p) => p.index) });
  }
  return hits;
}

export function allRules(ruleSet: RuleSet): number[] {
  return Array.from({ length: RULE_COUNT[ruleSet] }, (_, i) => i + 1);
}

/** Evaluates a whole series, as the chart view does. */
export function evaluateRules(
  points: readonly RulePoint[],
  ruleSet: RuleSet,
  rules: readonly number[] = allRules(ruleSet),
): RuleHit[] {
  const state = createRuleState();
  const hits: RuleHit[] = [];
  for (const p of points) hits.push(...pushRulePoint(state, p, ruleSet, rules));
  return hits;
}
