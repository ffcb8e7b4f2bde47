import { useState } from 'react';
import { useForm, useWatch, type Resolver } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { Link } from 'react-router';
import {
  COMPONENT_LOT_LABELS,
  whatIfFiltersSchema,
  type ComponentLotKind,
  type WhatIfFilters,
  type WhatIfLotGroup,
  type WhatIfRunView,
} from '#shared/schemas/recipes';
import { Alert, Loading } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { CheckboxField, TextField } from '#src/components/ui/field';
import { Panel } from '#src/components/ui/panel';
import { StatusChip } from '#src/components/ui/status-chip';
import { applyServerErrors } from '#src/lib/form-errors';
import { formatDateTime, localToInstant } from '#src/lib/format';
import { useCancelWhatIf, useStartWhatIf, useWhatIfProgress, useWhatIfRuns } from '../api/what-if';
import { OffsetHistogramChart } from './offset-histogram';
import { formatOffsetDeg } from '#shared/wording';

const lotName = (lot: string | null | undefined) => lot ?? 'no lot recorded';

/** Changed units per component lot: a bad lot shows as most of its units changing. */
function LotGroups({ lots }: { lots: Record<ComponentLotKind, WhatIfLotGroup[]> }) {
  const kinds = Object.keys(COMPONENT_LOT_LABELS) as ComponentLotKind[];
  return (
    <div data-testid="what-if-lots">
      <h3 className="mb-2 text-lg font-semibold">Changed units by component lot</h3>
      <div className="flex flex-col gap-4">
        {kinds.map((kind) => (
          <TableFrame key={kind} caption={`Changed units by ${COMPONENT_LOT_LABELS[kind].toLowerCase()}`}>
            <thead>
              <tr>
                <Th>{COMPONENT_LOT_LABELS[kind]}</Th>
                <Th>Changed of replayed</Th>
                <Th>Pass → fail</Th>
                <Th>Fail → pass</Th>
              </tr>
            </thead>
            <tbody>
              {lots[kind].map((g) => (
                <tr key={g.lot ?? '(none)'}>
                  <Td className="font-mono">{lotName(g.lot)}</Td>
                  <Td>
                    {g.changed} of {g.replayed} units ({Math.round((100 * g.changed) / g.replayed)} %)
                  </Td>
                  <Td>{g.passToFail} units</Td>
                  <Td>{g.failToPass} units</Td>
                </tr>
              ))}
            </tbody>
          </TableFrame>
        ))}
      </div>
    </div>
  );
}

const deg = formatOffsetDeg;

/**
 * What this version would have said of units already built: it replays their stored measurements
 * and compares with the version in force. Analysis only: no unit, calibration or traveler changes.
 */
export function WhatIfPanel({
  recipeId,
  version,
  stations,
  canRun,
}: {
  recipeId: string;
  version: number;
  stations: { id: string; name: string }[];
  canRun: boolean;
}) {
  const runs = useWhatIfRuns(recipeId);
  const latest = runs.data?.[0];
  useWhatIfProgress(recipeId, latest);
  return (
    <Panel title="What-if on past units" titleId="what-if-title">
      <p className="mb-4 max-w-3xl text-graphite-300">
        Replays the stored measurements of units already built with version {version} and compares each
        verdict with the one the version in force gives. It is analysis only: no unit, calibration, traveler
        or station result changes.
      </p>
      {canRun ? (
        <WhatIfForm recipeId={recipeId} stations={stations} busy={latest?.status === 'running'} />
      ) : null}
      {runs.isPending ? <Loading label="Loading runs…" /> : null}
      {runs.isError ? <Alert tone="fault">{runs.error.message}</Alert> : null}
      {latest ? <RunView run={latest} recipeId={recipeId} canRun={canRun} /> : null}
      {runs.data && runs.data.length === 0 ? (
        <p className="text-graphite-300">No what-if run for this version yet.</p>
      ) : null}
    </Panel>
  );
}

type WhatIfForm = { lastUnits: string; from: string; to: string; stationIds: string[] };

/** The form's text becomes the filters the server's schema reads: a number, instants, stations or none. */
const filtersResolver = zodResolver(whatIfFiltersSchema);
const whatIfResolver: Resolver<WhatIfForm, unknown, WhatIfFilters> = (values, context, options) =>
  filtersResolver(
    {
      lastUnits: values.lastUnits === '' ? undefined : Number(values.lastUnits),
      from: localToInstant(values.from) || undefined,
      to: localToInstant(values.to) || undefined,
      stationIds: values.stationIds.length ? values.stationIds : undefined,
    },
    context,
    options as never,
  ) as ReturnType<Resolver<WhatIfForm, unknown, WhatIfFilters>>;

function WhatIfForm({
  recipeId,
  stations,
  busy,
}: {
  recipeId: string;
  stations: { id: string; name: string }[];
  busy: boolean;
}) {
  const start = useStartWhatIf(recipeId);
  const [banner, setBanner] = useState<string | null>(null);
  const form = useForm<WhatIfForm, unknown, WhatIfFilters>({
    resolver: whatIfResolver,
    defaultValues: { lastUnits: '1000', from: '', to: '', stationIds: [] },
  });
  const { errors } = form.formState;
  const picked = useWatch({ control: form.control, name: 'stationIds' });
  const go = form.handleSubmit(async (filters) => {
    setBanner(null);
    try {
      await start.mutateAsync(filters);
    } catch (e) {
      setBanner(applyServerErrors(e, form.setError, ['lastUnits', 'from', 'to', 'stationIds']));
    }
  });
  return (
    <form className="mb-6 flex flex-col gap-4" onSubmit={go} noValidate>
      {banner ? <Alert tone="fault">{banner}</Alert> : null}
      <div className="grid gap-4 md:grid-cols-3">
        <TextField
          label={
            <>
              Most recent units <span className="normal-case">(units)</span>
            </>
          }
          type="number"
          inputMode="numeric"
          hint="Each unit's latest measurement in the range is replayed."
          error={errors.lastUnits?.message}
          {...form.register('lastUnits')}
        />
        <TextField
          label="Measured from"
          type="datetime-local"
          hint="Optional; your local time."
          error={errors.from?.message}
          {...form.register('from')}
        />
        <TextField
          label="Measured until"
          type="datetime-local"
          hint="Optional; your local time."
          error={errors.to?.message}
          {...form.register('to')}
        />
      </div>
      {stations.length > 1 ? (
        <fieldset className="flex flex-wrap gap-x-6">
          <legend className="mb-1 text-sm font-semibold tracking-wide text-graphite-200 uppercase">
            Stations (none ticked: all)
          </legend>
          {stations.map((s) => (
            <CheckboxField
              key={s.id}
              label={s.name}
              checked={picked.includes(s.id)}
              onChange={(e) =>
                form.setValue(
                  'stationIds',
                  e.target.checked ? [...picked, s.id] : picked.filter((x) => x !== s.id),
                )
              }
            />
          ))}
        </fieldset>
      ) : null}
      <div>
        <Button type="submit" variant="primary" busy={start.isPending} disabled={busy}>
          Run what-if
        </Button>
      </div>
    </form>
  );
}

const STATUS_WORDS: Record<WhatIfRunView['status'], string> = {
  queued: 'Waiting to start',
  running: 'Running',
  done: 'Done',
  cancelled: 'Cancelled',
  failed: 'Failed',
};

function RunView({ run, recipeId, canRun }: { run: WhatIfRunView; recipeId: string; canRun: boolean }) {
  const cancel = useCancelWhatIf(recipeId);
  const live = run.status === 'queued' || run.status === 'running';
  const pct = run.total ? Math.round((100 * run.processed) / run.total) : 0;
  const s = run.summary;
  return (
    <div className="flex flex-col gap-5" data-testid="what-if-run">
      <div className="flex flex-wrap items-center gap-3">
        <StatusChip
          tone={run.status === 'done' ? 'ok' : run.status === 'failed' ? 'fault' : live ? 'warn' : 'neutral'}
        >
          {STATUS_WORDS[run.status]}
        </StatusChip>
        <span className="text-graphite-200">
          Asked by {run.requestedBy?.displayName ?? 'unknown'} at {formatDateTime(run.createdAt)}; version{' '}
          {run.recipe.version} against version {run.baseline.version} (in force then), last{' '}
          {run.filters.lastUnits} units
          {run.filters.stationIds?.length ? `, ${run.filters.stationIds.length} station(s)` : ''}.
        </span>
        {live && canRun ? (
          <Button busy={cancel.isPending} onClick={() => cancel.mutate(run.id)}>
            Cancel run
          </Button>
        ) : null}
      </div>
      {live ? (
        <div className="flex flex-col gap-1">
          <progress
            className="h-4 w-full max-w-xl accent-copper-400"
            max={run.total || 1}
            value={run.processed}
            aria-label="Measurements replayed"
          />
          <span className="text-graphite-300" role="status">
            {run.processed} of {run.total || '…'} measurements replayed ({pct} %)
          </span>
        </div>
      ) : null}
      {run.error ? <Alert tone="fault">{run.error}</Alert> : null}
      {s ? (
        <>
          <dl className="grid grid-cols-2 gap-4 md:grid-cols-5" data-testid="what-if-summary">
            {[
              ['Measurements replayed', `${s.measurements}`],
              ['Pass → fail', `${s.passToFail} units`],
              ['Fail → pass', `${s.failToPass} units`],
              ['Unchanged', `${s.unchanged} units`],
              ['Unusable input', `${s.unusable} measurements`],
            ].map(([label, value]) => (
              <div key={label} className="flex flex-col">
                <dt className="text-sm font-semibold tracking-wide text-graphite-400 uppercase">{label}</dt>
                <dd className="font-mono text-2xl text-graphite-50">{value}</dd>
              </div>
            ))}
          </dl>
          {s.causes.length ? (
            <div>
              <h3 className="mb-2 text-lg font-semibold">Which checks cause the changes</h3>
              <ul className="list-inside list-disc text-graphite-200">
                {s.causes.map((c) => (
                  <li key={c.code}>
                    {c.label}: {c.count} units
                  </li>
                ))}
              </ul>
            </div>
          ) : null}
          <div>
            <h3 className="mb-2 text-lg font-semibold">Offset distribution</h3>
            <OffsetHistogramChart
              draft={s.histogram.draft}
              inForce={s.histogram.inForce}
              draftLabel={`Version ${run.recipe.version}`}
              inForceLabel={`Version ${run.baseline.version} (in force)`}
            />
          </div>
          {s.lots && s.changed.length ? <LotGroups lots={s.lots} /> : null}
          {s.changed.length ? (
            <TableFrame caption="Units whose verdict would change">
              <thead>
                <tr>
                  <Th>Unit</Th>
                  <Th>Measured</Th>
                  <Th>In force</Th>
                  <Th>Version {run.recipe.version}</Th>
                  <Th>Checks</Th>
                  <Th>Lots (hall board, magnet ring, stator)</Th>
                </tr>
              </thead>
              <tbody>
                {s.changed.map((c) => (
                  <tr key={c.measurementId}>
                    <Td>
                      <Link
                        to={`/units/${encodeURIComponent(c.serial)}`}
                        className="inline-flex min-h-target items-center font-mono font-semibold text-copper-200 underline underline-offset-4"
                      >
                        {c.serial}
                      </Link>
                    </Td>
                    <Td>{formatDateTime(c.receivedAt)}</Td>
                    <Td>
                      {c.before.verdict} at {deg(c.before.offsetDeg)}
                    </Td>
                    <Td className="font-semibold">
                      {c.after.verdict} at {deg(c.after.offsetDeg)}
                    </Td>
                    <Td>
                      {c.checks
                        .map((code) => s.causes.find((x) => x.code === code)?.label ?? code)
                        .join(', ')}
                    </Td>
                    <Td className="font-mono">
                      {c.lots
                        ? [c.lots.hallBoard, c.lots.magnetRing, c.lots.stator].map(lotName).join(' · ')
                        : '—'}
                    </Td>
                  </tr>
                ))}
              </tbody>
            </TableFrame>
          ) : null}
        </>
      ) : null}
    </div>
  );
}
