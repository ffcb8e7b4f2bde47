import { checkName } from '#shared/calibration/check-guide';
import { formatRecipeValue, RECIPE_FIELDS, recipeValue } from '#shared/recipe/recipe-fields';
import type { CalibrationView } from '#shared/schemas/calibrations';
import type { TimelineEntry } from '#shared/schemas/unit-record';
import { formatOffsetDeg } from '#shared/wording';

// How the unit record words things: dispositions, who held it, audit actions, sources, recipe limits and a
// calibration's timeline entry.

export const DISPOSITION_WORDS = {
  use_as_is: 'use as is',
  rework: 'rework',
  recalibrate: 'recalibrate',
  scrap: 'scrap',
} as const;

export const HOLD_SOURCE_WHO = {
  retest_policy: 'Retest policy (automatic)',
  programming_mismatch: 'Programming check (automatic)',
} as const;

/** Audit actions in plain words; anything not listed shows its code. */
export const AUDIT_WORDS: Record<string, string> = {
  'units.registered': 'Registered',
  'units.held': 'Put on hold',
  'units.released': 'Released from hold',
  'units.held_by_retest_policy': 'Put on hold by the retest policy',
  'units.held_by_programming_mismatch': 'Put on hold by the programming check',
  'units.programming_mismatch': 'Programming read-back mismatch recorded',
  'units.record_exported': 'Record exported',
  'travelers.printed': 'Traveler printed',
  'travelers.reprinted': 'Traveler reprinted',
  'calibrations.recomputed': 'Recomputation recorded',
};

export const SOURCE_WORDS = { timings: 'posted timings (JSON)', capture: 'sampled capture (CSV)' } as const;

/** A model as the traveler names it: its name, with its code in front unless the name starts with it. */
export function modelName(model: { code: string; name: string }): string {
  return model.name.toUpperCase().startsWith(model.code.toUpperCase())
    ? model.name
    : `${model.code} ${model.name}`;
}

/** The limits and attempt budget of a recipe version, as the recipe desk names them. */
export function recipeLimitLines(
  body: Parameters<typeof recipeValue>[0],
): { label: string; value: string }[] {
  const lines = RECIPE_FIELDS.filter((f) => f.path.startsWith('limits.'))
    .map((f) => ({ f, v: recipeValue(body, f.path) }))
    .filter(({ v }) => v !== null)
    .map(({ f, v }) => ({ label: f.label, value: formatRecipeValue(v, f.unit) }));
  lines.push({ label: 'Calibration attempts allowed', value: String(body.maxAttempts) });
  return lines;
}

function checksLine(c: CalibrationView): string {
  const checks = c.result?.checks ?? [];
  const failed = checks.filter((x) => !x.passed).length;
  if (checks.length === 0) return 'none recorded';
  return failed === 0 ? `all ${checks.length} passed` : `${failed} of ${checks.length} failed`;
}

export function calibrationEntry(c: CalibrationView, who: string | null): TimelineEntry {
  const verdict = c.verdict.toUpperCase();
  const station = c.purpose === 'station';
  const attempt =
    c.attempt === null ? 'not counted as an attempt' : `attempt ${c.attempt} of ${c.maxAttempts}`;
  const details = [
    {
      label: 'Offset',
      value: c.offsetDeg === null ? '—' : `${formatOffsetDeg(c.offsetDeg)} (${c.offsetCounts} counts)`,
    },
    { label: 'Recipe', value: `${c.recipe.name ?? 'recipe'} v${c.recipe.version}` },
    { label: 'Engine version', value: c.engineVersion },
    { label: 'Checks', value: checksLine(c) },
    { label: 'Measurement', value: c.measurementId },
  ];
  if (c.error) details.push({ label: 'Why unusable', value: c.error.message });
  if (!station && c.reason) details.push({ label: 'Reason', value: c.reason });
  return {
    at: c.computedAt,
    kind: station ? 'calibration' : 'recomputation',
    title: station
      ? `Calibrated at ${c.stationName}: ${verdict}, ${attempt}`
      : `Recomputed with recipe v${c.recipe.version} and engine ${c.engineVersion}: ${verdict} (analysis only, the unit is unchanged)`,
    who,
    details,
    tone: c.verdict === 'pass' ? 'good' : c.verdict === 'fail' ? 'bad' : 'warn',
    failedChecks: (c.result?.checks ?? []).filter((x) => !x.passed).map((x) => checkName(x.code)),
    measurementId: c.measurementId,
  };
}
