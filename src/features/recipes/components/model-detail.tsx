import { useState } from 'react';
import { Link, useNavigate } from 'react-router';
import type { ModelDetailView } from '#shared/schemas/recipes';
import { Alert, Loading } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { Dialog } from '#src/components/ui/dialog';
import { Panel } from '#src/components/ui/panel';
import { SelectField } from '#src/components/ui/field';
import { formatDateTime } from '#src/lib/format';
import { useCreateDraft, useDiff, useModel } from '../api/recipes';
import { DiffTable } from './diff-table';
import { ModelForm } from './model-form';
import { RecipeStatusChip } from './recipe-status';

function Fact({ label, children }: { label: string; children: React.ReactNode }) {
  return (
    <div className="flex flex-col gap-0.5">
      <dt className="text-sm font-semibold tracking-wide text-graphite-400 uppercase">{label}</dt>
      <dd className="text-lg text-graphite-50">{children}</dd>
    </div>
  );
}

/** One model: its facts, every recipe version, copying a version into a draft, and comparing two. */
export function ModelDetail({ modelId, canChange }: { modelId: string; canChange: boolean }) {
  const model = useModel(modelId);
  const [editing, setEditing] = useState(false);
  if (model.isPending) return <Loading label="Loading the model…" />;
  if (model.isError) return <Alert tone="fault">Could not read the model: {model.error.message}</Alert>;
  const m = model.data;
  const y = m.firstPassYield7d;
  return (
    <div className="flex flex-col gap-6">
      <Panel
        title={`${m.code} · ${m.name}`}
        actions={canChange ? <Button onClick={() => setEditing(true)}>Change model</Button> : null}
      >
        <dl className="grid grid-cols-2 gap-4 md:grid-cols-4">
          <Fact label="Pole pairs">{m.polePairs} pole pairs</Fact>
          <Fact label="Hall layout">{m.hallLayout ?? 'no recipe in force'}</Fact>
          <Fact label="Counts per turn">{m.countsPerTurn === null ? '—' : `${m.countsPerTurn} counts`}</Fact>
          <Fact label="Recipe in force">{m.activeRecipe ? `Version ${m.activeRecipe.version}` : 'none'}</Fact>
          <Fact label="Stations">{m.stations.map((s) => s.name).join(', ') || 'none'}</Fact>
          <Fact label="Units built">{m.unitsBuilt} units</Fact>
          <Fact label="First-pass yield, last 7 days">
            {y.pct === null
              ? 'no units measured'
              : `${y.pct.toFixed(1)} % (${y.passedFirst} of ${y.firstMeasured})`}
          </Fact>
        </dl>
      </Panel>
      <VersionList model={m} canChange={canChange} />
      <CompareVersions model={m} />
      <Dialog open={editing} onClose={() => setEditing(false)} title={`Change model ${m.code}`}>
        {editing ? (
          <ModelForm model={m} onDone={() => setEditing(false)} onCancel={() => setEditing(false)} />
        ) : null}
      </Dialog>
    </div>
  );
}

function VersionList({ model, canChange }: { model: ModelDetailView; canChange: boolean }) {
  const copy = useCreateDraft(model.id);
  const navigate = useNavigate();
  const copyFrom = async (id: string) => {
    const draft = await copy.mutateAsync(id);
    await navigate(`/recipes/versions/${draft.id}`);
  };
  return (
    <Panel title="Recipe versions" titleId="versions-title">
      {copy.isError ? <Alert tone="fault">Could not copy: {copy.error.message}</Alert> : null}
      <TableFrame caption={`Recipe versions of ${model.code}`}>
        <thead>
          <tr>
            <Th>Version</Th>
            <Th>State</Th>
            <Th>Written by</Th>
            <Th>Released</Th>
            <Th>Reason</Th>
            <Th>
              <span className="sr-only">Actions</span>
            </Th>
          </tr>
        </thead>
        <tbody>
          {model.versions.map((v) => (
            <tr key={v.id}>
              <Td>
                <Link
                  to={`/recipes/versions/${v.id}`}
                  className="inline-flex min-h-target items-center font-semibold text-copper-200 underline-offset-4 hover:underline"
                >
                  Version {v.version}
                </Link>
              </Td>
              <Td>
                <RecipeStatusChip status={v.status} />
              </Td>
              <Td>{v.createdBy?.displayName ?? 'first setup'}</Td>
              <Td>
                {v.releasedAt
                  ? `${formatDateTime(v.releasedAt)} by ${v.releasedBy?.displayName ?? '—'}`
                  : '—'}
              </Td>
              <Td className="max-w-md">{v.changeReason ?? v.notes ?? '—'}</Td>
              <Td className="text-right">
                {canChange ? (
                  <Button
                    variant="quiet"
                    busy={copy.isPending && copy.variables === v.id}
                    onClick={() => void copyFrom(v.id)}
                  >
                    Copy into a new draft<span className="sr-only"> from version {v.version}</span>
                  </Button>
                ) : null}
              </Td>
            </tr>
          ))}
        </tbody>
      </TableFrame>
      {model.discarded.length ? (
        <details className="mt-4">
          <summary className="inline-flex min-h-target cursor-pointer items-center text-copper-200 underline underline-offset-4">
            Discarded drafts ({model.discarded.length}), kept for the record
          </summary>
          <ul className="mt-2 flex flex-col gap-1">
            {model.discarded.map((v) => (
              <li key={v.id}>
                <Link
                  to={`/recipes/versions/${v.id}`}
                  className="inline-flex min-h-target items-center text-copper-200 underline-offset-4 hover:underline"
                >
                  Version {v.version}
                </Link>{' '}
                discarded {v.discardedAt ? formatDateTime(v.discardedAt) : ''} by{' '}
                {v.discardedBy?.displayName ?? '—'}: {v.discardReason}
              </li>
            ))}
          </ul>
        </details>
      ) : null}
    </Panel>
  );
}

function CompareVersions({ model }: { model: ModelDetailView }) {
  const versions = model.versions;
  const [fromId, setFromId] = useState(versions[1]?.id ?? versions[0]?.id ?? '');
  const [toId, setToId] = useState(versions[0]?.id ?? '');
  const diff = useDiff(fromId, toId);
  const options = versions.map((v) => ({ value: v.id, label: `Version ${v.version}` }));
  const label = (id: string) => `Version ${versions.find((v) => v.id === id)?.version ?? '?'}`;
  if (versions.length < 2) return null;
  return (
    <Panel title="Compare two versions" titleId="compare-title">
      <div className="mb-4 grid max-w-xl grid-cols-2 gap-4">
        <SelectField
          label="From"
          options={options}
          value={fromId}
          onChange={(e) => setFromId(e.target.value)}
        />
        <SelectField label="To" options={options} value={toId} onChange={(e) => setToId(e.target.value)} />
      </div>
      {fromId === toId ? (
        <p className="text-graphite-300">Pick two different versions.</p>
      ) : diff.isPending ? (
        <Loading label="Comparing…" />
      ) : diff.isError ? (
        <Alert tone="fault">{diff.error.message}</Alert>
      ) : (
        <DiffTable
          changes={diff.data}
          caption={`Changes from ${label(fromId)} to ${label(toId)}`}
          fromLabel={label(fromId)}
          toLabel={label(toId)}
        />
      )}
    </Panel>
  );
}
