import { z } from 'zod';
import { recipeSchema } from './recipe';

/** A motor model as the line reads it: its code, pole pairs and the recipe in force. */
export const modelViewSchema = z.object({
  id: z.string(),
  code: z.string(),
  name: z.string(),
  polePairs: z.number().int(),
  activeRecipe: z
    .object({ id: z.string(), version: z.number().int(), name: z.string().nullable(), body: recipeSchema })
    .nullable(),
});
export type ModelView = z.infer<typeof modelViewSchema>;
