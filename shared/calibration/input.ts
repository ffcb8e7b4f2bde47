import type { z } from 'zod';
import { measurementSchema, type Measurement } from '../schemas/measurement';
import { recipeSchema, type Recipe } from '../schemas/recipe';
import { deriveHallLayout } from './hall-layout';

export interface InputIssue {
  /** Where the problem is, e.g. "measurement.segments[0].hallEdges[3].us" or "recipe.limits.offsetDeg". */
  path: string;
  message: string;
}

/** Unusable input: not a unit failure. Lists every problem found, each with its path. */
export class CalibrationInputError extends Error {
  readonly code = 'calibration.invalid_input' as const;
  readonly issues: InputIssue[];

  /** `unlisted`: further problems found but not listed (bounded error size); they are counted in the last issue. */
  constructor(issues: InputIssue[], unlisted = 0) {
    const total = issues.length + unlisted;
    const head = issues
      .slice(0, 5)
      .map((i) => `${i.path}: ${i.message}`)
      .join('; ');
    super(`Unusable calibration input (${total} problem${total === 1 ? '' : 's'}): ${head}`);
    this.name = 'CalibrationInputError';
    this.issues =
      unlisted > 0
        ? [
            ...issues,
            {
              path: '(more)',
              message: `and ${unlisted} more problem${unlisted === 1 ? '' : 's'} of the same kinds, not listed`,
            },
          ]
        : issues;
  }
}

export type ValidationOutcome =
  { ok: true; measurement: Measurement; recipe: Recipe } | { ok: false; issues: InputIssue[] };

/** Renders a zod path as `root.a[0].b`. */
export function formatPath(root: string, path: readonly PropertyKey[]): string {
  let out = root;
  for (const p of path) out += typeof p === 'number' ? `[${p}]` : `.${String(p)}`;
  return out;
}

function zodIssues(root: string, error: z.ZodError): InputIssue[] {
  return error.issues.map((i) => ({ path: formatPath(root, i.path), message: i.message }));
}

/** Smallest gap between hall boundaries the engine accepts: sectors narrower than this cannot be told apart. */
const MIN_BOUNDARY_GAP_DEG = 5;

/** Checks a recipe beyond its schema (the layout must give six distinct sectors). */
export function recipeIssues(recipe: Recipe): InputIssue[] {
  const issues: InputIssue[] = [];
  const layout = deriveHallLayout(recipe.hallRiseDeg);
  if (layout.minGapDeg < MIN_BOUNDARY_GAP_DEG || new Set(layout.states).size !== 6) {
    issues.push({
      path: 'recipe.hallRiseDeg',
      message: `the rise angles must give six distinct hall sectors at least ${MIN_BOUNDARY_GAP_DEG}° wide (narrowest is ${layout.minGapDeg.toFixed(1)}°)`,
    });
  }
  const [lo, hi] = recipe.limits.offsetDeg;
  if (lo <= -180 || hi > 180) {
    issues.push({
      path: 'recipe.limits.offsetDeg',
      message: 'the offset window must lie inside (−180°, 180°]',
    });
  }
  return issues;
}

const isSensor = (v: unknown) => v === 'A' || v === 'B' || v === 'C';
const isChannel = (v: unknown) => isSensor(v) || v === 'AB' || v === 'BC' || v === 'CA';
const isEdge = (v: unknown) => v === 'rise' || v === 'fall';

const isObject = (v: unknown): v is Record<string, unknown> =>
  typeof v === 'object' && v !== null && !Array.isArray(v);
const shortString = (v: unknown, min: number) => typeof v === 'string' && v.length >= min && v.length <= 200;

function timedList(list: unknown, min: number, key: 'sensor' | 'channel'): boolean {
  const kind = key === 'sensor' ? isSensor : isChannel;
  if (!Array.isArray(list) || list.length < min) return false;
  let prev = -Infinity;
  for (const item of list) {
    if (!isObject(item)) return false;
    const us = item.us;
    if (typeof us !== 'number' || !Number.isFinite(us) || us < prev) return false;
    if (!kind(item[key]) || !isEdge(item.edge)) return false;
    prev = us;
  }
  return true;
}

/**
 * True only when `measurementSchema` would accept the value. A plain walk over the data (no copies), so
 * the common case of good input skips the schema's object-by-object parse; anything it rejects goes
 * through the schema for the full list of issues. Kept equivalent by a property test.
 */
export function isWellFormedMeasurement(value: unknown): value is Measurement {
  if (!isObject(value)) return false;
  if (!shortString(value.measurementId, 1) || !shortString(value.serial, 1)) return false;
  if (value.capturedAt !== undefined && typeof value.capturedAt !== 'string') return false;
  if (value.stationId !== undefined && !shortString(value.stationId, 0)) return false;
  const segments = value.segments;
  if (!Array.isArray(segments) || segments.length < 1) return false;
  for (const seg of segments) {
    if (!isObject(seg)) return false;
    if (seg.direction !== 'forward' && seg.direction !== 'reverse') return false;
    if (seg.label !== undefined && !shortString(seg.label, 0)) return false;
    if (!timedList(seg.hallEdges, 1, 'sensor')) return false;
    if (!timedList(seg.bemfCrossings, 4, 'channel')) return false;
  }
  return true;
}

/**
 * Validates raw (parsed JSON) measurement and recipe without throwing. On success the typed, parsed values
 * are returned; otherwise every problem found, each with a path rooted at "measurement" or "recipe".
 */
export function validateCalibrationInput(measurement: unknown, recipe: unknown): ValidationOutcome {
  const m: { success: true; data: Measurement } | ReturnType<typeof measurementSchema.safeParse> =
    isWellFormedMeasurement(measurement)
      ? { success: true, data: measurement }
      : measurementSchema.safeParse(measurement);
  const r = recipeSchema.safeParse(recipe);
  const issues: InputIssue[] = [];
  if (!m.success) issues.push(...zodIssues('measurement', m.error));
  if (!r.success) issues.push(...zodIssues('recipe', r.error));
  if (r.success) issues.push(...recipeIssues(r.data));
  if (m.success) {
    m.data.segments.forEach((seg, i) => {
      const c = seg.bemfCrossings;
      if (!(c[c.length - 1].us > c[0].us)) {
        issues.push({
          path: `measurement.segments[${i}].bemfCrossings`,
          message: 'the crossings must spread over time: all of them fall on one instant',
        });
      }
    });
  }
  if (issues.length > 0 || !m.success || !r.success) return { ok: false, issues };
  return { ok: true, measurement: m.data, recipe: r.data };
}
