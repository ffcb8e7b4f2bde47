import { useState } from 'react';
import { useForm, useWatch } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import {
  RULE_SET_SIZE,
  watchedChartSettingsSchema,
  type WatchedChartSettings,
  type WatchedChartView,
} from '#shared/schemas/alerts';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { CheckboxField, SelectField, TextField } from '#src/components/ui/field';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { QueryState } from '#src/components/ui/query-state';
import { applyServerErrors } from '#src/lib/form-errors';
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
  const list = charts.data ?? [];
  const stations = [...new Map(list.map((c) => [c.stationId, c.station])).entries()];
  const [stationId, setStationId] = useState('');
  const [kind, setKind] = useState<Kind>('imr');
  const station = stationId || stations[0]?.[0] || '';
  const current = list.find((c) => c.stationId === station && c.kind === kind);

  return (
    <section aria-labelledby="watched-title" className="flex flex-col gap-3 border-2 border-graphite-700 p-4">
      <h3 id="watched-title" className="text-xl font-semibold text-graphite-50">
        Watched charts (alerts after every calibration)
      </h3>
      <p className="text-graphite-300">
        Each station’s offset charts are judged as every unit is calibrated; a broken rule opens an alert. By
        default each station watches an individuals chart with Western Electric rules 1–4 and an EWMA.
      </p>
      <QueryState
        query={charts}
        pending="Reading the watched charts…"
        failed="The watched charts could not be read"
        isEmpty={(rows) => rows.length === 0}
        empty={
          <p className="text-graphite-300">
            No station has calibrated this model yet, so no chart is watched.
          </p>
        }
      >
        {(rows) => (
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
              {rows.map((c) => (
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
        )}
      </QueryState>
      {canChange && stations.length ? (
        <WatchedChartForm
          // A new station or chart starts from that chart's own settings.
          key={`${station}|${kind}`}
          modelId={modelId}
          stations={stations}
          stationId={station}
          kind={kind}
          current={current}
          onPick={(s, k) => {
            setStationId(s);
            setKind(k);
          }}
        />
      ) : null}
    </section>
  );
}

const FIELDS = [
  'stationId',
  'kind',
  'watched',
  'ruleSet',
  'rules',
  'lambda',
  'limitWidth',
  'subgroupSize',
] as const;
const allRules = (set: keyof typeof RULE_SET_SIZE) =>
  Array.from({ length: RULE_SET_SIZE[set] }, (_, i) => i + 1);

/** One chart's settings, checked by the server's own schema before they are sent. */
function WatchedChartForm({
  modelId,
  stations,
  stationId,
  kind,
  current,
  onPick,
}: {
  modelId: string;
  stations: [string, string][];
  stationId: string;
  kind: Kind;
  current: WatchedChartView | undefined;
  onPick: (stationId: string, kind: Kind) => void;
}) {
  const save = useSetWatchedChart();
  const [banner, setBanner] = useState<string | null>(null);
  const [saved, setSaved] = useState(false);
  const form = useForm<z.input<typeof watchedChartSettingsSchema>, unknown, WatchedChartSettings>({
    resolver: zodResolver(watchedChartSettingsSchema),
    defaultValues: {
      stationId,
      modelId,
      kind,
      watched: current?.watched ?? true,
      ruleSet: current?.ruleSet ?? 'western-electric',
      rules: current && current.kind !== 'ewma' ? current.rules : [1, 2, 3, 4],
      lambda: current?.lambda ?? 0.2,
      limitWidth: current?.limitWidth ?? 3,
      subgroupSize: current?.subgroupSize ?? 5,
    },
  });
  const { errors } = form.formState;
  const ruleSet = useWatch({ control: form.control, name: 'ruleSet' }) ?? 'western-electric';
  const rules = useWatch({ control: form.control, name: 'rules' }) ?? [];
  const submit = form.handleSubmit(async (settings) => {
    setBanner(null);
    setSaved(false);
    try {
      await save.mutateAsync(kind === 'ewma' ? { ...settings, rules: undefined } : settings);
      setSaved(true);
    } catch (error) {
      setBanner(applyServerErrors(error, form.setError, FIELDS));
    }
  });
  const number = { valueAsNumber: true } as const;

  return (
    <form
      aria-label="Change a watched chart"
      noValidate
      className="grid grid-cols-1 gap-4 sm:grid-cols-2 lg:grid-cols-4"
      onSubmit={submit}
    >
      <SelectField
        label="Station"
        value={stationId}
        error={errors.stationId?.message}
        onChange={(e) => onPick(e.target.value, kind)}
        options={stations.map(([id, name]) => ({ value: id, label: name }))}
      />
      <SelectField
        label="Chart to watch"
        value={kind}
        error={errors.kind?.message}
        onChange={(e) => onPick(stationId, e.target.value as Kind)}
        options={Object.entries(KINDS).map(([v, label]) => ({ value: v, label }))}
      />
      <CheckboxField label="Watch this chart" {...form.register('watched')} />
      {kind === 'ewma' ? (
        <>
          <TextField
            label="Weight λ (0 to 1)"
            type="number"
            step={0.05}
            min={0.05}
            max={1}
            error={errors.lambda?.message}
            {...form.register('lambda', number)}
          />
          <TextField
            label="Limit width L (σ)"
            type="number"
            step={0.1}
            min={1}
            max={6}
            error={errors.limitWidth?.message}
            {...form.register('limitWidth', number)}
          />
        </>
      ) : (
        <>
          <SelectField
            label="Run rules"
            error={errors.ruleSet?.message}
            {...form.register('ruleSet', {
              onChange: (e: { target: { value: keyof typeof RULE_SET_SIZE } }) =>
                form.setValue('rules', allRules(e.target.value)),
            })}
            options={Object.entries(RULE_SETS).map(([v, label]) => ({
              value: v,
              label: `${label} 1–${RULE_SET_SIZE[v as 'nelson']}`,
            }))}
          />
          <fieldset
            className="flex flex-wrap gap-x-4 sm:col-span-2"
            aria-describedby={errors.rules ? 'rules-error' : undefined}
          >
            <legend className="text-graphite-200">Rules judged</legend>
            {allRules(ruleSet).map((r) => (
              <CheckboxField
                key={r}
                label={`Rule ${r}`}
                checked={rules.includes(r)}
                onChange={(e) =>
                  form.setValue(
                    'rules',
                    e.target.checked ? [...rules, r].sort((a, b) => a - b) : rules.filter((x) => x !== r),
                    { shouldValidate: form.formState.isSubmitted },
                  )
                }
              />
            ))}
            {errors.rules ? (
              <p id="rules-error" role="alert" className="w-full text-sm font-medium text-fault">
                {errors.rules.message}
              </p>
            ) : null}
          </fieldset>
          {kind === 'xbar-r' ? (
            <TextField
              label="Units per subgroup"
              type="number"
              min={2}
              max={25}
              error={errors.subgroupSize?.message}
              {...form.register('subgroupSize', number)}
            />
          ) : null}
        </>
      )}
      <div className="flex items-end">
        <Button type="submit" variant="primary" busy={save.isPending}>
          Save this chart
        </Button>
      </div>
      {banner ? (
        <div className="sm:col-span-2 lg:col-span-4">
          <Alert tone="fault">{banner}</Alert>
        </div>
      ) : null}
      {saved ? (
        <p role="status" className="text-graphite-200 sm:col-span-2 lg:col-span-4">
          Saved. The chart judges the calibrations from now on.
        </p>
      ) : null}
    </form>
  );
}
