import { useState } from 'react';
import { useMutation, useQuery } from '@tanstack/react-query';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { recomputeSchema } from '#shared/schemas/calibrations';
import type { UnitDetail } from '#shared/schemas/units';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { SelectField, TextField } from '#src/components/ui/field';
import { Panel } from '#src/components/ui/panel';
import { StatusChip } from '#src/components/ui/status-chip';
import { apiRequest } from '#src/lib/api-client';
import { showServerErrorOn } from '#src/lib/form-errors';
import { formatDateTime } from '#src/lib/format';
import { recipesKeys, useModel } from '../api/recipes';
import { formatOffsetDeg } from '#shared/wording';

const deg = formatOffsetDeg;
/** The reason is typed; the measurement and the version are chosen from lists the server gave. */
const reasonFields = recomputeSchema.pick({ reason: true });

/**
 * An engineer recomputes one of the unit's stored measurements with another released version of its
 * model. The result is analysis: it is shown beside the station's and never changes the unit.
 */
export function RecomputePanel({ serial }: { serial: string }) {
  const [waiting, setWaiting] = useState<{ measurementId: string; recipeId: string } | null>(null);
  const detail = useQuery({
    queryKey: [...recipesKeys.details(), 'unit', serial],
    queryFn: () => apiRequest<UnitDetail>(`/api/units/${encodeURIComponent(serial)}`),
    refetchInterval: waiting ? 1000 : false,
  });
  const model = useModel(detail.data?.unit.model.id ?? '');
  const station = detail.data?.calibrations.filter((c) => c.purpose === 'station') ?? [];
  const recomputed = detail.data?.calibrations.filter((c) => c.purpose === 'recompute') ?? [];
  const versions = (model.data?.versions ?? []).filter(
    (v) => v.status === 'released' || v.status === 'retired',
  );
  const [measurementId, setMeasurementId] = useState('');
  const [recipeId, setRecipeId] = useState('');
  const form = useForm<{ reason: string }>({
    resolver: zodResolver(reasonFields),
    defaultValues: { reason: '' },
  });
  const ask = useMutation({
    mutationFn: (input: { measurementId: string; recipeId: string; reason: string }) =>
      apiRequest<{ status: 'queued' | 'computed' }>(
        `/api/measurements/${encodeURIComponent(input.measurementId)}/recompute`,
        {
          method: 'POST',
          body: { recipeId: input.recipeId, reason: input.reason },
        },
      ),
  });
  if (!detail.data || station.length === 0) return null;
  const chosenMeasurement = measurementId || station[0].measurementId;
  const chosenRecipe = recipeId || versions[0]?.id || '';
  if (
    waiting &&
    recomputed.some((c) => c.measurementId === waiting.measurementId && c.recipe.id === waiting.recipeId)
  )
    setWaiting(null);
  const go = form.handleSubmit(async ({ reason }) => {
    try {
      await ask.mutateAsync({ measurementId: chosenMeasurement, recipeId: chosenRecipe, reason });
      setWaiting({ measurementId: chosenMeasurement, recipeId: chosenRecipe });
      await detail.refetch();
    } catch (e) {
      showServerErrorOn(e, form.setError, 'reason');
    }
  });
  return (
    <Panel title="Recompute with another recipe version" titleId="recompute-title">
      <Alert tone="info" title="Analysis only">
        A recomputation is recorded beside the station&apos;s result. It does not change the unit, its status,
        its attempts, what was programmed or its traveler.
      </Alert>
      <form onSubmit={go} noValidate>
        <div className="mt-4 grid gap-4 md:grid-cols-3">
          <SelectField
            label="Measurement"
            value={chosenMeasurement}
            onChange={(e) => setMeasurementId(e.target.value)}
            options={station.map((c) => ({
              value: c.measurementId,
              label: `${formatDateTime(c.computedAt)}: ${c.verdict} at ${deg(c.offsetDeg)} (version ${c.recipe.version})`,
            }))}
          />
          <SelectField
            label="Recipe version"
            value={chosenRecipe}
            onChange={(e) => setRecipeId(e.target.value)}
            options={versions.map((v) => ({
              value: v.id,
              label: `Version ${v.version} (${v.status === 'released' ? 'in force' : 'retired'})`,
            }))}
          />
          <TextField
            label="Reason"
            required
            error={form.formState.errors.reason?.message}
            {...form.register('reason')}
          />
        </div>
        <div className="mt-4 flex items-center gap-3">
          <Button type="submit" variant="primary" busy={ask.isPending || !!waiting}>
            Recompute
          </Button>
          {waiting ? <span role="status">Computing…</span> : null}
        </div>
      </form>
      {recomputed.length ? (
        <div className="mt-6">
          <TableFrame caption="Recomputations beside the station's result">
            <thead>
              <tr>
                <Th>Measurement</Th>
                <Th>Station result</Th>
                <Th>Recomputed (analysis)</Th>
                <Th>Why, who</Th>
              </tr>
            </thead>
            <tbody>
              {recomputed.map((r) => {
                const s = station.find((c) => c.measurementId === r.measurementId);
                return (
                  <tr key={r.calibrationId}>
                    <Td>{s ? formatDateTime(s.computedAt) : r.measurementId}</Td>
                    <Td>{s ? `${s.verdict} at ${deg(s.offsetDeg)}, version ${s.recipe.version}` : '—'}</Td>
                    <Td>
                      <span className="flex flex-wrap items-center gap-2">
                        <StatusChip tone="accent">Analysis</StatusChip>
                        {r.verdict} at {deg(r.offsetDeg)}, version {r.recipe.version}
                      </span>
                    </Td>
                    <Td>{r.reason ?? '—'}</Td>
                  </tr>
                );
              })}
            </tbody>
          </TableFrame>
        </div>
      ) : null}
    </Panel>
  );
}
