import { Link } from 'react-router';
import { Alert, Loading } from '#src/components/ui/alert';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { useModels } from '../api/recipes';

function yieldText(y: { firstMeasured: number; passedFirst: number; pct: number | null }): string {
  if (y.pct === null) return 'no units measured';
  return `${y.pct.toFixed(1)} % (${y.passedFirst} of ${y.firstMeasured} units)`;
}

/** Every motor model with the recipe version in force, its stations, units built and first-pass yield. */
export function ModelsList() {
  const models = useModels();
  if (models.isPending) return <Loading label="Loading models…" />;
  if (models.isError) return <Alert tone="fault">Could not read the models: {models.error.message}</Alert>;
  if (models.data.length === 0) return <p className="text-graphite-300">No models yet.</p>;
  return (
    <TableFrame caption="Motor models">
      <thead>
        <tr>
          <Th>Model</Th>
          <Th>Pole pairs</Th>
          <Th>Hall layout</Th>
          <Th>Counts per turn</Th>
          <Th>Recipe in force</Th>
          <Th>Stations</Th>
          <Th className="text-right">Units built</Th>
          <Th>First-pass yield, last 7 days</Th>
        </tr>
      </thead>
      <tbody>
        {models.data.map((m) => (
          <tr key={m.id}>
            <Td>
              <Link
                to={`/recipes/models/${m.id}`}
                className="inline-flex min-h-target flex-col justify-center font-semibold text-copper-200 underline-offset-4 hover:underline"
              >
                <span className="font-mono">{m.code}</span>
                <span className="text-sm font-normal text-graphite-300">{m.name}</span>
              </Link>
            </Td>
            <Td className="font-mono">{m.polePairs}</Td>
            <Td>{m.hallLayout ?? 'no recipe in force'}</Td>
            <Td className="font-mono">{m.countsPerTurn === null ? '—' : `${m.countsPerTurn} counts`}</Td>
            <Td>{m.activeRecipe ? `Version ${m.activeRecipe.version}` : 'none: stations cannot test it'}</Td>
            <Td>{m.stations.length ? m.stations.map((s) => s.name).join(', ') : 'none'}</Td>
            <Td className="text-right font-mono">{m.unitsBuilt}</Td>
            <Td>{yieldText(m.firstPassYield7d)}</Td>
          </tr>
        ))}
      </tbody>
    </TableFrame>
  );
}
