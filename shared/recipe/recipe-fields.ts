import type { Recipe } from '../schemas/recipe';

/**
 * One place for what each recipe number means to a person: its label, its unit and a one-line
 * explanation. The draft editor, the diff and the review screen all read this list.
 * `path` names a leaf of the recipe body; ranges are split into their min and max.
 */
export interface RecipeField {
  path: string;
  label: string;
  /** Unit shown after the number ('' for plain words or yes/no). */
  unit: string;
  help: string;
  kind: 'number' | 'integer' | 'text' | 'boolean';
  optional?: boolean;
}

export const RECIPE_FIELDS: readonly RecipeField[] = [
  {
    path: 'name',
    label: 'Display name',
    unit: '',
    kind: 'text',
    optional: true,
    help: 'How the recipe is named on screens and travelers.',
  },
  {
    path: 'polePairs',
    label: 'Pole pairs',
    unit: 'pole pairs',
    kind: 'integer',
    help: 'Electrical angle = pole pairs × mechanical angle; must match the model.',
  },
  {
    path: 'hallRiseDeg.A',
    label: 'Hall A rise angle',
    unit: '°e',
    kind: 'number',
    help: 'Design angle at which sensor A goes high turning forward (low 180° later).',
  },
  {
    path: 'hallRiseDeg.B',
    label: 'Hall B rise angle',
    unit: '°e',
    kind: 'number',
    help: 'Design angle at which sensor B goes high turning forward.',
  },
  {
    path: 'hallRiseDeg.C',
    label: 'Hall C rise angle',
    unit: '°e',
    kind: 'number',
    help: 'Design angle at which sensor C goes high turning forward.',
  },
  {
    path: 'bemfDelayUs',
    label: 'Zero-crossing detector delay',
    unit: 'µs',
    kind: 'number',
    help: "The station detector's delay, subtracted from every back-EMF crossing time.",
  },
  {
    path: 'debounceUs',
    label: 'Hall debounce',
    unit: 'µs',
    kind: 'number',
    help: 'Edges of one sensor closer together than this are bounce; the first edge counts.',
  },
  {
    path: 'countsPerTurn',
    label: 'Counts per electrical turn',
    unit: 'counts',
    kind: 'integer',
    help: 'Firmware angle resolution; the offset is also given in these counts.',
  },
  {
    path: 'countsSigned',
    label: 'Signed counts',
    unit: '',
    kind: 'boolean',
    help: 'Yes: offsets in counts lie in ±half a turn; no: in 0 to one turn.',
  },
  {
    path: 'maxAttempts',
    label: 'Attempts before hold',
    unit: 'attempts',
    kind: 'integer',
    help: 'Measurements a unit may take without a pass before it goes on hold.',
  },
  {
    path: 'limits.offsetDeg.0',
    label: 'Offset window, lowest',
    unit: '°e',
    kind: 'number',
    help: 'Smallest accepted hall offset; a unit below it fails.',
  },
  {
    path: 'limits.offsetDeg.1',
    label: 'Offset window, highest',
    unit: '°e',
    kind: 'number',
    help: 'Largest accepted hall offset; a unit above it fails.',
  },
  {
    path: 'limits.edgeResidualDeg',
    label: 'Largest edge residual',
    unit: '°e',
    kind: 'number',
    help: 'How far any one of the six edge types may sit from the common offset.',
  },
  {
    path: 'limits.speedRpm.0',
    label: 'Speed window, lowest',
    unit: 'rpm',
    kind: 'number',
    help: 'Slowest accepted mean speed of a measured segment.',
  },
  {
    path: 'limits.speedRpm.1',
    label: 'Speed window, highest',
    unit: 'rpm',
    kind: 'number',
    help: 'Fastest accepted mean speed of a measured segment.',
  },
  {
    path: 'limits.minElectricalRevs',
    label: 'Fewest electrical turns',
    unit: 'turns',
    kind: 'number',
    help: 'Each segment must cover at least this many electrical turns.',
  },
  {
    path: 'limits.fitResidualDeg',
    label: 'Largest crossing fit residual',
    unit: '°e RMS',
    kind: 'number',
    optional: true,
    help: 'Optional: scatter of the back-EMF crossings about the angle fit (winding imbalance, noise).',
  },
  {
    path: 'limits.speedVariationPct',
    label: 'Largest speed variation',
    unit: '%',
    kind: 'number',
    optional: true,
    help: 'Optional: speed change within a segment, as a share of its mean.',
  },
  {
    path: 'limits.keVPerKrpm.0',
    label: 'Back-EMF constant, lowest',
    unit: 'V/krpm',
    kind: 'number',
    optional: true,
    help: 'Optional, sampled captures only: smallest accepted line-to-line back-EMF constant.',
  },
  {
    path: 'limits.keVPerKrpm.1',
    label: 'Back-EMF constant, highest',
    unit: 'V/krpm',
    kind: 'number',
    optional: true,
    help: 'Optional, sampled captures only: largest accepted line-to-line back-EMF constant.',
  },
];

export type RecipeLeaf = string | number | boolean | null;

/** The value at a field path, or null when the recipe does not set it. */
export function recipeValue(recipe: Recipe, path: string): RecipeLeaf {
  let v: unknown = recipe;
  for (const key of path.split('.')) {
    if (v === null || v === undefined || typeof v !== 'object') return null;
    v = (v as Record<string, unknown>)[key];
  }
  return v === undefined ? null : (v as RecipeLeaf);
}

export interface RecipeFieldChange {
  path: string;
  label: string;
  unit: string;
  before: RecipeLeaf;
  after: RecipeLeaf;
}

/** Field-by-field differences from `before` to `after`, in the order of RECIPE_FIELDS. */
export function diffRecipes(before: Recipe, after: Recipe): RecipeFieldChange[] {
  const out: RecipeFieldChange[] = [];
  for (const f of RECIPE_FIELDS) {
    const a = recipeValue(before, f.path);
    const b = recipeValue(after, f.path);
    if (a !== b) out.push({ path: f.path, label: f.label, unit: f.unit, before: a, after: b });
  }
  return out;
}

/** A value with its unit for a person: "−12.5 °e", "yes", "not set". */
export function formatRecipeValue(value: RecipeLeaf, unit: string): string {
  if (value === null) return 'not set';
  if (typeof value === 'boolean') return value ? 'yes' : 'no';
  if (typeof value === 'number') {
    const text = String(value).replace('-', '−');
    return unit ? `${text} ${unit}` : text;
  }
  return value;
}

/** "120° layout (A 0°, B 120°, C 240°)": the spacing between the sensors' rise angles, for lists. */
export function hallLayoutLabel(hall: Recipe['hallRiseDeg']): string {
  const wrap = (d: number) => ((d % 360) + 360) % 360;
  const ab = wrap(hall.B - hall.A);
  const spacing = Math.min(ab, 360 - ab);
  return `${spacing}° layout (A ${hall.A}°, B ${hall.B}°, C ${hall.C}°)`;
}
