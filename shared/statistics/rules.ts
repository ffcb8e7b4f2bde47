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

// The checks read the last n points in place and build a list only when a rule fires (a 10,000-point chart runs
// every check at every point: slicing a window each time made most of its garbage).

/** Where the last n points start, or -1 when there are fewer. */
function windowStart(points: readonly RulePoint[], n: number): number {
  return points.length >= n ? points.length - n : -1;
}

function beyond(p: RulePoint, k: number, side: number): boolean {
  return side * p.z > k;
}

const SIDES = [1, -1] as const;

function kOfM(points: readonly RulePoint[], k: number, m: number, sigmas: number): RulePoint[] | null {
  const from = windowStart(points, m);
  if (from < 0) return null;
  const current = points[points.length - 1];
  for (let s = 0; s < SIDES.length; s++) {
    const side = SIDES[s];
    if (!beyond(current, sigmas, side)) continue;
    let count = 0;
    for (let i = from; i < points.length; i++) if (beyond(points[i], sigmas, side)) count += 1;
    if (count >= k) return points.slice(from).filter((p) => beyond(p, sigmas, side));
  }
  return null;
}

function sameSide(points: readonly RulePoint[], n: number): RulePoint[] | null {
  const from = windowStart(points, n);
  if (from < 0) return null;
  let above = true;
  let below = true;
  for (let i = from; i < points.length; i++) {
    if (!(points[i].z > 0)) above = false;
    if (!(points[i].z < 0)) below = false;
  }
  return above || below ? points.slice(from) : null;
}

function trend(points: readonly RulePoint[], n: number): RulePoint[] | null {
  const from = windowStart(points, n);
  if (from < 0) return null;
  let up = true;
  let down = true;
  for (let i = from + 1; i < points.length; i++) {
    if (!(points[i].value > points[i - 1].value)) up = false;
    if (!(points[i].value < points[i - 1].value)) down = false;
  }
  return up || down ? points.slice(from) : null;
}

function alternating(points: readonly RulePoint[], n: number): RulePoint[] | null {
  const from = windowStart(points, n);
  if (from < 0) return null;
  for (let i = from + 1; i < points.length; i++) {
    const d = points[i].value - points[i - 1].value;
    if (d === 0) return null;
    if (i >= from + 2) {
      const prev = points[i - 1].value - points[i - 2].value;
      if (Math.sign(d) === Math.sign(prev)) return null;
    }
  }
  return points.slice(from);
}

function all(points: readonly RulePoint[], n: number, test: (p: RulePoint) => boolean): RulePoint[] | null {
  const from = windowStart(points, n);
  if (from < 0) return null;
  for (let i = from; i < points.length; i++) if (!test(points[i])) return null;
  return points.slice(from);
}

type RuleCheck = (points: readonly RulePoint[]) => RulePoint[] | null;

const beyond3: RuleCheck = (pts) => {
  const p = pts[pts.length - 1];
  return Math.abs(p.z) > 3 ? [p] : null;
};

const within1 = (q: RulePoint) => Math.abs(q.z) < 1;
const outside1 = (q: RulePoint) => Math.abs(q.z) > 1;

const CHECKS: Record<RuleSet, readonly RuleCheck[]> = {
  'western-electric': [beyond3, (p) => kOfM(p, 2, 3, 2), (p) => kOfM(p, 4, 5, 1), (p) => sameSide(p, 8)],
  nelson: [
    beyond3,
    (p) => sameSide(p, 9),
    (p) => trend(p, 6),
    (p) => alternating(p, 14),
    (p) => kOfM(p, 2, 3, 2),
    (p) => kOfM(p, 4, 5, 1),
    (p) => all(p, 15, within1),
    (p) => all(p, 8, outside1),
  ],
};

const NO_HITS: readonly RuleHit[] = Object.freeze([]);

/**
 * Adds one point to the state and returns the rules it completes. The state is updated in place. The list
 * returned when nothing fires is shared and frozen: add to a list of your own.
 */
export function pushRulePoint(
  state: RuleState,
  point: RulePoint,
  ruleSet: RuleSet,
  rules: readonly number[] = allRules(ruleSet),
): readonly RuleHit[] {
  state.recent.push(point);
  while (state.recent.length > WINDOW) state.recent.shift();
  let hits: RuleHit[] | null = null;
  const checks = CHECKS[ruleSet];
  for (let r = 0; r < rules.length; r++) {
    const rule = rules[r];
    const check = checks[rule - 1];
    if (!check) continue;
    const involved = check(state.recent);
    if (involved) (hits ??= []).push({ rule, index: point.index, involved: involved.map((p) => p.index) });
  }
  return hits ?? NO_HITS;
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
  for (let i = 0; i < points.length; i++) {
    const found = pushRulePoint(state, points[i], ruleSet, rules);
    for (let k = 0; k < found.length; k++) hits.push(found[k]);
  }
  return hits;
}
