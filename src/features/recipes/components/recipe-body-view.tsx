import { formatRecipeValue, RECIPE_FIELDS, recipeValue } from '#shared/recipe/recipe-fields';
import type { Recipe } from '#shared/schemas/recipe';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';

/** A version's every field, read-only: value with unit and what the field does. */
export function RecipeBodyView({ body, caption }: { body: Recipe; caption: string }) {
  return (
    <TableFrame caption={caption}>
      <thead>
        <tr>
          <Th>Field</Th>
          <Th>Value</Th>
          <Th>What it does</Th>
        </tr>
      </thead>
      <tbody>
        {RECIPE_FIELDS.map((f) => (
          <tr key={f.path}>
            <Td className="font-semibold">{f.label}</Td>
            <Td className="font-mono whitespace-nowrap">
              {formatRecipeValue(recipeValue(body, f.path), f.unit)}
            </Td>
            <Td className="text-graphite-300">{f.help}</Td>
          </tr>
        ))}
      </tbody>
    </TableFrame>
  );
}
