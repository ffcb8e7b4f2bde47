import { useState } from 'react';
import { useSearchParams } from 'react-router';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { clearLimitsSchema } from '#shared/schemas/analysis';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { TextField } from '#src/components/ui/field';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { useLimitHistory, useSaveLimits } from '../api/analysis';
import { FILTER_KEYS } from '../api/filter-state';
import { applyServerErrors } from '#src/lib/form-errors';
import { fmt } from './stat-format';

/** The reason is typed; scope, window and chart come from the filter (the URL). */
const reasonFields = clearLimitsSchema.pick({ reason: true });

const BASIS = { imr: 'moving ranges', 'xbar-r': 'subgroup ranges', 'xbar-s': 'subgroup standard deviations' };

/**
 * Frozen limits of the chosen station (one station in the filter) or of the model (none): who set the ones in
 * force and when, every version, and — for an engineer with a baseline window chosen — saving or clearing.
 */
export function LimitsPanel({ canSet, unit }: { canSet: boolean; unit: string }) {
  const [params] = useSearchParams();
  const model = params.get('model');
  const stations = (params.get('stations') ?? '').split(',').filter(Boolean);
  const station = stations.length === 1 ? stations[0] : '';
  const figure = params.get('figure') ?? 'offsetDeg';
  const history = useLimitHistory(model, station, figure);
  const save = useSaveLimits();
  const form = useForm<{ reason: string }>({
    resolver: zodResolver(reasonFields),
    defaultValues: { reason: '' },
  });
  const [banner, setBanner] = useState<string | null>(null);
  const baselineFrom = params.get('baselineFrom');
  const baselineTo = params.get('baselineTo');
  const chart = params.get('chart') ?? 'imr';
  const scopeWords = station ? 'this station' : 'the model (every station without limits of its own)';

  if (stations.length > 1)
    return (
      <p className="text-graphite-300">
        Frozen limits belong to one station or to the whole model: choose one station, or none, to see or save
        them.
      </p>
    );

  const filterBody = () => {
    const body: Record<string, unknown> = {};
    for (const key of FILTER_KEYS) {
      const v = params.get(key);
      if (v && key !== 'from' && key !== 'to' && key !== 'range')
        body[key] = v.includes(',') ? v.split(',') : v;
    }
    if (station) body.stations = [station];
    return body;
  };

  const send = (action: 'freeze' | 'clear') =>
    form.handleSubmit(async ({ reason }) => {
      setBanner(null);
      try {
        await save.mutateAsync(
          action === 'freeze'
            ? {
                action,
                body: {
                  ...filterBody(),
                  chart: chart === 'ewma' ? 'imr' : chart,
                  subgroupSize: Number(params.get('subgroupSize') ?? 5),
                  baselineFrom,
                  baselineTo,
                  reason,
                },
              }
            : { action, body: { model, ...(station ? { station } : {}), figure, reason } },
        );
        form.reset({ reason: '' });
      } catch (e) {
        // the reason's refusals under the field; the window's or the scope's above the table
        setBanner(applyServerErrors(e, form.setError, ['reason']));
      }
    })();
  const freeze = () => send('freeze');
  const clear = () => send('clear');

  const inForce = history.data?.inForce;
  return (
    <section aria-labelledby="limits-title" className="flex flex-col gap-3 border-2 border-graphite-700 p-4">
      <h3 id="limits-title" className="text-xl font-semibold text-graphite-50">
        Frozen limits for {scopeWords}
      </h3>
      {inForce ? (
        <p className="text-graphite-200">
          In force: version {inForce.version}
          {inForce.scope === 'model' && station ? ' of the model’s limits' : ''}, centre{' '}
          {fmt(inForce.center!, unit, 3)}, σ within {fmt(inForce.sigma!, unit, 3)} (from{' '}
          {BASIS[inForce.basis ?? 'imr']} of {inForce.points} values,{' '}
          {new Date(inForce.baselineFrom!).toLocaleDateString()} to{' '}
          {new Date(inForce.baselineTo!).toLocaleDateString()}
          ), set by <strong>{inForce.setBy}</strong> on {new Date(inForce.setAt).toLocaleString()}: “
          {inForce.reason}”.
        </p>
      ) : (
        <p className="text-graphite-300">
          None in force: the charts compute their limits from the points shown.
        </p>
      )}
      {canSet ? (
        <div className="flex flex-col gap-3">
          <TextField
            label="Why (kept with the limits and in the audit log)"
            maxLength={500}
            error={form.formState.errors.reason?.message}
            {...form.register('reason')}
          />
          <div className="flex flex-wrap gap-3">
            <Button
              variant="primary"
              busy={save.isPending}
              disabled={!baselineFrom || !baselineTo}
              onClick={() => void freeze()}
            >
              Save limits from the baseline window
            </Button>
            <Button
              busy={save.isPending}
              disabled={!history.data?.versions[0] || history.data.versions[0].cleared}
              onClick={() => void clear()}
            >
              Clear: compute limits from the points shown
            </Button>
          </div>
          {banner ? <Alert tone="fault">{banner}</Alert> : null}
          {!baselineFrom || !baselineTo ? (
            <p className="text-sm text-graphite-400">
              To save limits, choose the baseline window above (“Limits from” and “Limits until”): the chart
              shows them first, then save.
            </p>
          ) : null}
        </div>
      ) : null}
      {history.data?.versions.length ? (
        <TableFrame caption={`Every version of the frozen limits for ${scopeWords}, newest first`}>
          <thead>
            <tr>
              <Th>Version</Th>
              <Th>Limits</Th>
              <Th>Baseline window</Th>
              <Th>Set by</Th>
              <Th>When</Th>
              <Th>Why</Th>
            </tr>
          </thead>
          <tbody>
            {history.data.versions.map((v) => (
              <tr key={v.id}>
                <Td className="font-semibold">{v.version}</Td>
                <Td>
                  {v.cleared
                    ? 'Cleared (computed from the points shown)'
                    : `centre ${fmt(v.center!, unit, 3)}, σ ${fmt(v.sigma!, unit, 3)}`}
                </Td>
                <Td className="whitespace-nowrap">
                  {v.baselineFrom
                    ? `${new Date(v.baselineFrom).toLocaleDateString()} – ${new Date(v.baselineTo!).toLocaleDateString()}`
                    : '—'}
                </Td>
                <Td>{v.setBy}</Td>
                <Td className="whitespace-nowrap">{new Date(v.setAt).toLocaleString()}</Td>
                <Td>{v.reason}</Td>
              </tr>
            ))}
          </tbody>
        </TableFrame>
      ) : null}
    </section>
  );
}
