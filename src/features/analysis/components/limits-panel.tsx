import { useState } from 'react';
import { useSearchParams } from 'react-router';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { TextField } from '#src/components/ui/field';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { useLimitHistory, useSaveLimits } from '../api/analysis';
import { FILTER_KEYS } from '../api/filter-state';
import { fmt } from './stat-format';

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
  const [reason, setReason] = useState('');
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
            value={reason}
            maxLength={500}
            onChange={(e) => setReason(e.target.value)}
          />
          <div className="flex flex-wrap gap-3">
            <Button
              variant="primary"
              busy={save.isPending}
              disabled={!baselineFrom || !baselineTo || reason.trim().length < 3}
              onClick={() =>
                save.mutate(
                  {
                    action: 'freeze',
                    body: {
                      ...filterBody(),
                      chart: chart === 'ewma' ? 'imr' : chart,
                      subgroupSize: Number(params.get('subgroupSize') ?? 5),
                      baselineFrom,
                      baselineTo,
                      reason,
                    },
                  },
                  { onSuccess: () => setReason('') },
                )
              }
            >
              Save limits from the baseline window
            </Button>
            <Button
              busy={save.isPending}
              disabled={
                !history.data?.versions[0] || history.data.versions[0].cleared || reason.trim().length < 3
              }
              onClick={() =>
                save.mutate(
                  { action: 'clear', body: { model, ...(station ? { station } : {}), figure, reason } },
                  { onSuccess: () => setReason('') },
                )
              }
            >
              Clear: compute limits from the points shown
            </Button>
          </div>
          {!baselineFrom || !baselineTo ? (
            <p className="text-sm text-graphite-400">
              To save limits, choose the baseline window above (“Limits from” and “Limits until”): the chart
              shows them first, then save.
            </p>
          ) : null}
          {save.error ? <Alert tone="fault">{save.error.message}</Alert> : null}
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
