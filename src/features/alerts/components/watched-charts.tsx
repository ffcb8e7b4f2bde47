import { useState } from 'react';
import { RULE_SET_SIZE, type WatchedChartView } from '#shared/schemas/alerts';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { CheckboxField, SelectField, TextField } from '#src/components/ui/field';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { useSetWatchedChart, useWatchedCharts } from '../api/alerts';

const KINDS = {
  imr: 'Individuals',
  'xbar-r': 'Subgroup means and ranges',
  ewma: 'EWMA (slow drift)',
} as const;
type Kind = keyof typeof KINDS;
const RULE_SETS = { 'western-electric': 'Western Electric', nelson: 'Nelson' } as const;
const LIMITS = {
  frozen: 'Frozen limits (saved by an engineer)',
  own: 'Its own, from its first 30 points',
  pending: 'Collecting its first 30 points',
};

function settingsText(c: WatchedChartView) {
  if (c.kind === 'ewma') return `λ ${c.lambda}, L ${c.limitWidth}`;
  const rules = `${RULE_SETS[c.ruleSet]} ${c.rules.join(', ')}`;
  return c.kind === 'xbar-r' ? `${rules}; ${c.subgroupSize} units per subgroup` : rules;
}

/**
 * The charts judged after every calibration for a model's stations: which are watched, with which rules or
 * EWMA weights, whose settings; engineers change one chart at a time.
 */
export function WatchedCharts({ modelId, canChange }: { modelId: string; canChange: boolean }) {
  const charts = useWatchedCharts(modelId);
  const save = useSetWatchedChart();
  const list = charts.data ?? [];
  const stations = [...new Map(list.map((c) => [c.stationId, c.station])).entries()];
  const [stationId, setStationId] = useState('');
  const [kind, setKind] = useState<Kind>('imr');
  const station = stationId || stations[0]?.[0] || '';
  const current = list.find((c) => c.stationId === station && c.kind === kind);
  const [draft, setDraft] = useState<Record<string, string | boolean | number[]>>({});
  const value = <T,>(key: string, fallback: T): T => (key in draft ? (draft[key] as T) : fallback);
  const ruleSet = value<'western-electric' | 'nelson'>('ruleSet', current?.ruleSet ?? 'western-electric');
  const rules = value<number[]>(
    'rules',
    current && current.kind !== 'ewma' ? current.rules : [1, 2, 3, 4],
  ).filter((r) => r <= RULE_SET_SIZE[ruleSet]);
  const pick = (s: string, k: Kind) => {
    setStationId(s);
    setKind(k);
    setDraft({});
  };

  return (
    <section aria-labelledby="watched-title" className="flex flex-col gap-3 border-2 border-graphite-700 p-4">
      <h3 id="watched-title" className="text-xl font-semibold text-graphite-50">
        Watched charts (alerts after every calibration)
      </h3>
      <p className="text-graphite-300">
        Each station’s offset charts are judged as every unit is calibrated; a broken rule opens an alert. By
        default each station watches an individuals chart with Western Electric rules 1–4 and an EWMA.
      </p>
      {charts.error ? <Alert tone="fault">{charts.error.message}</Alert> : null}
      {list.length === 0 && charts.data ? (
        <p className="text-graphite-300">No station has calibrated this model yet, so no chart is watched.</p>
      ) : null}
      {list.length ? (
        <TableFrame caption="Watched charts of this model by station">
          <thead>
            <tr>
              <Th>Station</Th>
              <Th>Chart</Th>
              <Th>Watched</Th>
              <Th>Rules or weights</Th>
              <Th>Limits</Th>
              <Th>Settings by</Th>
            </tr>
          </thead>
          <tbody>
            {list.map((c) => (
              <tr key={c.id}>
                <Td>{c.station}</Td>
                <Td>{KINDS[c.kind]}</Td>
                <Td>{c.watched ? 'Yes' : 'No (stopped)'}</Td>
                <Td>{settingsText(c)}</Td>
                <Td>{LIMITS[c.limits]}</Td>
                <Td>
                  {c.changedBy
                    ? `${c.changedBy}, ${new Date(c.changedAt!).toLocaleString()}`
                    : 'Product default'}
                </Td>
              </tr>
            ))}
          </tbody>
        </TableFrame>
      ) : null}
      {canChange && stations.length ? (
        <form
          aria-label="Change a watched chart"
          className="grid grid-cols-1 gap-4 sm:grid-cols-2 lg:grid-cols-4"
          onSubmit={(e) => {
            e.preventDefault();
            save.mutate(
              {
                stationId: station,
                modelId,
                kind,
                watched: value('watched', current?.watched ?? true),
                ruleSet,
                rules: kind === 'ewma' ? undefined : rules,
                lambda: Number(value('lambda', String(current?.lambda ?? 0.2))),
                limitWidth: Number(value('limitWidth', String(current?.limitWidth ?? 3))),
                subgroupSize: Number(value('subgroupSize', String(current?.subgroupSize ?? 5))),
              },
              { onSuccess: () => setDraft({}) },
            );
          }}
        >
          <SelectField
            label="Station"
            value={station}
            onChange={(e) => pick(e.target.value, kind)}
            options={stations.map(([id, name]) => ({ value: id, label: name }))}
          />
          <SelectField
            label="Chart to watch"
            value={kind}
            onChange={(e) => pick(station, e.target.value as Kind)}
            options={Object.entries(KINDS).map(([v, label]) => ({ value: v, label }))}
          />
          <CheckboxField
            label="Watch this chart"
            checked={value('watched', current?.watched ?? true)}
            onChange={(e) => setDraft({ ...draft, watched: e.target.checked })}
          />
          {kind === 'ewma' ? (
            <>
              <TextField
                label="Weight λ (0 to 1)"
                type="number"
                step={0.05}
                min={0.05}
                max={1}
                value={value('lambda', String(current?.lambda ?? 0.2))}
                onChange={(e) => setDraft({ ...draft, lambda: e.target.value })}
              />
              <TextField
                label="Limit width L (σ)"
                type="number"
                step={0.1}
                min={1}
                max={6}
                value={value('limitWidth', String(current?.limitWidth ?? 3))}
                onChange={(e) => setDraft({ ...draft, limitWidth: e.target.value })}
              />
            </>
          ) : (
            <>
              <SelectField
                label="Run rules"
                value={ruleSet}
                onChange={(e) =>
                  setDraft({
                    ...draft,
                    ruleSet: e.target.value,
                    rules: Array.from({ length: RULE_SET_SIZE[e.target.value as 'nelson'] }, (_, i) => i + 1),
                  })
                }
                options={Object.entries(RULE_SETS).map(([v, label]) => ({
                  value: v,
                  label: `${label} 1–${RULE_SET_SIZE[v as 'nelson']}`,
                }))}
              />
              <fieldset className="flex flex-wrap gap-x-4 sm:col-span-2">
                <legend className="text-graphite-200">Rules judged</legend>
                {Array.from({ length: RULE_SET_SIZE[ruleSet] }, (_, i) => i + 1).map((r) => (
                  <CheckboxField
                    key={r}
                    label={`Rule ${r}`}
                    checked={rules.includes(r)}
                    onChange={(e) =>
                      setDraft({
                        ...draft,
                        rules: e.target.checked
                          ? [...rules, r].sort((a, b) => a - b)
                          : rules.filter((x) => x !== r),
                      })
                    }
                  />
                ))}
              </fieldset>
              {kind === 'xbar-r' ? (
                <TextField
                  label="Units per subgroup"
                  type="number"
                  min={2}
                  max={25}
                  value={value('subgroupSize', String(current?.subgroupSize ?? 5))}
                  onChange={(e) => setDraft({ ...draft, subgroupSize: e.target.value })}
                />
              ) : null}
            </>
          )}
          <div className="flex items-end">
            <Button
              type="submit"
              variant="primary"
              busy={save.isPending}
              disabled={kind !== 'ewma' && !rules.length}
            >
              Save this chart
            </Button>
          </div>
          {save.error ? (
            <div className="sm:col-span-2 lg:col-span-4">
              <Alert tone="fault">{save.error.message}</Alert>
            </div>
          ) : null}
          {save.isSuccess ? (
            <p role="status" className="text-graphite-200 sm:col-span-2 lg:col-span-4">
              Saved. The chart judges the calibrations from now on.
            </p>
          ) : null}
        </form>
      ) : null}
    </section>
  );
}
