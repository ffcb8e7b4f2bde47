import { formatRecipeValue, type RecipeFieldChange } from '#shared/recipe/recipe-fields';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';

/** Field-by-field changes, old → new, each with its unit. */
export function DiffTable({
  changes,
  caption,
  fromLabel,
  toLabel,
}: {
  changes: RecipeFieldChange[];
  caption: string;
  fromLabel: string;
  toLabel: string;
}) {
  if (changes.length === 0)
    return <p className="text-graphite-300">No field differs: the two versions are the same.</p>;
  return (
    <TableFrame caption={caption}>
      <thead>
        <tr>
          <Th>Field</Th>
          <Th>{fromLabel}</Th>
          <Th>
            <span className="sr-only">becomes</span>
          </Th>
          <Th>{toLabel}</Th>
        </tr>
      </thead>
      <tbody>
        {changes.map((c) => (
          <tr key={c.path}>
            <Td className="font-semibold">{c.label}</Td>
            <Td className="font-mono text-graphite-300">{formatRecipeValue(c.before, c.unit)}</Td>
            <Td aria-hidden className="text-copper-300">
              →
            </Td>
            <Td className="font-mono font-semibold text-graphite-50">{formatRecipeValue(c.after, c.unit)}</Td>
          </tr>
        ))}
      </tbody>
    </TableFrame>
  );
}
