import { z } from 'zod';
import { recipeSchema, type Recipe } from '#shared/schemas/recipe';

/**
 * The editor validates with the shared recipe schema, the same one the server applies. The form holds
 * empty optional fields as undefined; they are dropped before validation, as the API would not get them.
 */
function dropEmpty(value: unknown): unknown {
  if (!value || typeof value !== 'object') return value;
  const v = structuredClone(value) as Record<string, unknown> & { limits?: Record<string, unknown> };
  if (v.name === '' || v.name === undefined) delete v.name;
  const limits = v.limits ?? {};
  for (const key of ['fitResidualDeg', 'speedVariationPct'] as const) {
    if (limits[key] === undefined || Number.isNaN(limits[key])) delete limits[key];
  }
  const ke = limits.keVPerKrpm as (number | undefined)[] | undefined;
  if (ke && ke.every((x) => x === undefined || Number.isNaN(x))) delete limits.keVPerKrpm;
  return v;
}

// Typed as the shared schema: the preprocess step only removes empty optional fields.
export const recipeFormSchema = z.preprocess(dropEmpty, recipeSchema) as unknown as typeof recipeSchema;

/** Plain words for the shared schema's refusals (numbers in the editor). */
export const recipeFormErrorMap: z.core.$ZodErrorMap = (iss) => {
  if (iss.code === 'invalid_type')
    return iss.expected === 'int' ? 'Enter a whole number.' : 'Enter a number.';
  if (iss.code === 'too_small')
    return iss.inclusive === false
      ? `Must be more than ${String(iss.minimum)}.`
      : `Must be at least ${String(iss.minimum)}.`;
  if (iss.code === 'too_big') return `Must be at most ${String(iss.maximum)}.`;
  return undefined;
};

export type RecipeFormValues = z.input<typeof recipeSchema>;
export type { Recipe };
