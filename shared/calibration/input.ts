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

  constructor(issues: InputIssue[]) {
    const head = issues
      .slice(0, 5)
      .map((i) => `${i.path}: ${i.message}`)
      .join('; ');
    super(`Unusable calibration input (${issues.length} problem${issues.length === 1 ? '' : 's'}): ${head}`);
    this.name = 'CalibrationInputError';
    this.issues = issues;
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

/**
 * Validates raw (parsed JSON) measurement and recipe without throwing. On success the typed, parsed values
 * are returned; otherwise every problem found, each with a path rooted at "measurement" or "recipe".
 */
export function validateCalibrationInput(measurement: unknown, recipe: unknown): ValidationOutcome {
  const m = measurementSchema.safeParse(measurement);
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
