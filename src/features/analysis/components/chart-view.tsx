import { lazy, Suspense, type ComponentProps } from 'react';
import { Link, useSearchParams } from 'react-router';
import type { ControlChartView as View } from '#shared/schemas/analysis';
import { SelectField, TextField } from '#src/components/ui/field';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { fmt } from './stat-format';

/**
 * The plot and its chart library come as a chunk of their own, asked for as soon as the control-chart view
 * opens (while the server computes the chart) and evaluated in a task of its own: inside the workspace's
 * chunk they made its evaluation one of the page's longest tasks.
 */
export const preloadControlChartPlot = () => import('./control-chart-plot');
const LazyPlot = lazy(() => preloadControlChartPlot().then((m) => ({ default: m.ControlChartPlot })));

function ControlChartPlot(props: ComponentProps<typeof LazyPlot>) {
  return (
    <Suspense
      fallback={<div aria-busy="true" className="w-full" style={{ minHeight: (props.height ?? 300) + 40 }} />}
    >
      <LazyPlot {...props} />
    </Suspense>
  );
}

const MAX_LISTED = 40;

/** Chart settings (kind, subgroups, EWMA weights, rule set) live in the URL beside the filter. */
export function ChartSettings() {
  const [params, setParams] = useSearchParams();
  const set = (key: string, value: string, fallback: string) => {
    // From the address as it is now, not as this render saw it: two changes in one moment (two fields
    // filled one after the other) must both stay.
    const next = new URLSearchParams(window.location.search);
    if (value === fallback || value === '') next.delete(key);
    else next.set(key, value);
    setParams(next);
  };
  const chart = params.get('chart') ?? 'imr';
  return (
    <div className="grid grid-cols-1 gap-4 sm:grid-cols-2 lg:grid-cols-5">
      <SelectField
        label="Chart"
        value={chart}
        onChange={(e) => set('chart', e.target.value, 'imr')}
        options={[
          { value: 'imr', label: 'Individuals and moving range' },
          { value: 'xbar-r', label: 'Subgroup means and ranges' },
          { value: 'xbar-s', label: 'Subgroup means and standard deviations' },
          { value: 'ewma', label: 'EWMA (slow drift)' },
        ]}
      />
      {chart === 'xbar-r' || chart === 'xbar-s' ? (
        <>
          <SelectField
            label="Subgroups"
            value={params.get('subgroupBy') ?? 'count'}
            onChange={(e) => set('subgroupBy', e.target.value, 'count')}
            options={[
              { value: 'count', label: 'Consecutive units' },
              { value: 'hour', label: 'By hour (plant time)' },
              { value: 'shift', label: 'By shift (plant shifts)' },
            ]}
          />
          <TextField
            label={
              params.get('subgroupBy') && params.get('subgroupBy') !== 'count'
                ? 'Units per subgroup (at most)'
                : 'Units per subgroup'
            }
            type="number"
            min={2}
            max={25}
            value={params.get('subgroupSize') ?? '5'}
            onChange={(e) => set('subgroupSize', e.target.value, '5')}
          />
        </>
      ) : null}
      {chart === 'ewma' ? (
        <>
          <TextField
            label="Weight λ (0 to 1)"
            type="number"
            step={0.05}
            min={0.05}
            max={1}
            value={params.get('lambda') ?? '0.2'}
            onChange={(e) => set('lambda', e.target.value, '0.2')}
          />
          <TextField
            label="Limit width L (σ)"
            type="number"
            step={0.1}
            min={1}
            max={6}
            value={params.get('L') ?? '3'}
            onChange={(e) => set('L', e.target.value, '3')}
          />
        </>
      ) : (
        <SelectField
          label="Run rules"
          value={params.get('ruleSet') ?? 'western-electric'}
          onChange={(e) => set('ruleSet', e.target.value, 'western-electric')}
          options={[
            { value: 'western-electric', label: 'Western Electric 1–4' },
            { value: 'nelson', label: 'Nelson 1–8' },
          ]}
        />
      )}
      <SelectField
        label="Limits"
        value={params.get('limits') ?? 'saved'}
        onChange={(e) => set('limits', e.target.value, 'saved')}
        options={[
          { value: 'saved', label: 'Frozen limits when saved' },
          { value: 'shown', label: 'Computed from the points shown' },
        ]}
      />
      <TextField
        label="Limits from (local time)"
        type="date"
        hint="Leave empty to compute limits from the points shown."
        value={params.get('baselineFrom')?.slice(0, 10) ?? ''}
        onChange={(e) =>
          set('baselineFrom', e.target.value ? new Date(`${e.target.value}T00:00`).toISOString() : '', '')
        }
      />
      <TextField
        label="Limits until (local time)"
        type="date"
        value={params.get('baselineTo')?.slice(0, 10) ?? ''}
        onChange={(e) =>
          set('baselineTo', e.target.value ? new Date(`${e.target.value}T00:00`).toISOString() : '', '')
        }
      />
    </div>
  );
}

export function ControlChartPanel({ view }: { view: View }) {
  const u = view.unit;
  return (
    <div className="flex flex-col gap-6">
      <p className="text-graphite-200">
        Centre {fmt(view.baseline.center, u, 3)}, σ within {fmt(view.baseline.sigma, u, 3)}, limits{' '}
        {view.baseline.source === 'saved' && view.baseline.saved
          ? `frozen (version ${view.baseline.saved.version}${view.baseline.saved.scope === 'model' ? ', the model’s' : ''}) by ${view.baseline.saved.setBy} on ${new Date(view.baseline.saved.setAt).toLocaleString()}, from the window ${new Date(view.baseline.from!).toLocaleDateString()} to ${new Date(view.baseline.to!).toLocaleDateString()}`
          : view.baseline.source === 'window'
            ? `held from the window ${new Date(view.baseline.from!).toLocaleDateString()} to ${new Date(view.baseline.to!).toLocaleDateString()} (not saved)`
            : 'computed from the points shown'}
        .
        {view.omitted > 0
          ? ` The ${view.omitted} oldest units are left out; the chart shows the newest.`
          : ''}{' '}
        Click a point to open its unit.
      </p>
      <ControlChartPlot
        id="chart-location"
        title={view.location.title}
        unit={u}
        points={view.location.points}
        center={view.location.center}
        ucl={view.location.ucl}
        lcl={view.location.lcl}
      />
      {view.spread ? (
        <ControlChartPlot
          id="chart-spread"
          title={view.spread.title}
          unit={u}
          points={view.spread.points}
          center={view.spread.center}
          ucl={view.spread.ucl}
          lcl={view.spread.lcl}
          height={200}
        />
      ) : null}
      <section aria-labelledby="violations-title" className="flex flex-col gap-3">
        <h3 id="violations-title" className="text-xl font-semibold text-graphite-50">
          Rule violations ({view.violations.length})
        </h3>
        {view.violations.length === 0 ? (
          <p className="text-graphite-300">No point breaks a rule.</p>
        ) : (
          <TableFrame caption="Points that break a run rule, with the units involved">
            <thead>
              <tr>
                <Th>Rule</Th>
                <Th>What it means</Th>
                <Th>At unit</Th>
                <Th>When</Th>
                <Th>Value</Th>
                <Th>Units involved</Th>
              </tr>
            </thead>
            <tbody>
              {view.violations.slice(0, MAX_LISTED).map((v, i) => (
                <tr key={i}>
                  <Td className="font-semibold">{v.rule}</Td>
                  <Td>{v.text}</Td>
                  <Td>
                    <Link
                      className="inline-flex min-h-target items-center text-copper-300 underline"
                      to={`/units/${encodeURIComponent(v.at.serial)}`}
                    >
                      {v.at.serial}
                    </Link>
                  </Td>
                  <Td className="whitespace-nowrap">{new Date(v.at.computedAt).toLocaleString()}</Td>
                  <Td className="tabular-nums">{fmt(v.at.value, u, 3)}</Td>
                  <Td>
                    {v.serials.length <= 4
                      ? v.serials.join(', ')
                      : `${v.serials.slice(0, 3).join(', ')} and ${v.serials.length - 3} more`}
                  </Td>
                </tr>
              ))}
            </tbody>
          </TableFrame>
        )}
        {view.violations.length > MAX_LISTED ? (
          <p className="text-graphite-300">
            The first {MAX_LISTED} are listed; narrow the filter to see the rest.
          </p>
        ) : null}
      </section>
    </div>
  );
}
