import { useState } from 'react';
import { Link, useNavigate } from 'react-router';
import type { RecipeVersionView } from '#shared/schemas/recipes';
import { Alert, Loading } from '#src/components/ui/alert';
import { LinkButton } from '#src/components/ui/button';
import { Panel } from '#src/components/ui/panel';
import { formatDateTime } from '#src/lib/format';
import { useDiff, useModel, useVersion } from '../api/recipes';
import { DiffTable } from './diff-table';
import { DraftEditor } from './draft-editor';
import { RecipeBodyView } from './recipe-body-view';
import { RecipeStatusChip } from './recipe-status';
import { DiscardPanel, ReviewPanel } from './review-panel';
import { WhatIfPanel } from './what-if-panel';

function History({ v }: { v: RecipeVersionView }) {
  const rows: [string, string | null][] = [
    ['Copied from', v.basedOn ? `Version ${v.basedOn.version}` : null],
    ['Written by', v.createdBy ? `${v.createdBy.displayName}, ${formatDateTime(v.createdAt)}` : null],
    [
      'Last saved by',
      v.updatedBy && v.updatedAt ? `${v.updatedBy.displayName}, ${formatDateTime(v.updatedAt)}` : null,
    ],
    [
      'Submitted by',
      v.submittedBy && v.submittedAt
        ? `${v.submittedBy.displayName}, ${formatDateTime(v.submittedAt)}`
        : null,
    ],
    ['Reason', v.changeReason],
    [
      'Released by',
      v.releasedBy && v.releasedAt ? `${v.releasedBy.displayName}, ${formatDateTime(v.releasedAt)}` : null,
    ],
    ['Retired', v.retiredAt ? formatDateTime(v.retiredAt) : null],
    ['Reviewer comment', v.reviewComment],
    [
      'Discarded by',
      v.discardedBy && v.discardedAt
        ? `${v.discardedBy.displayName}, ${formatDateTime(v.discardedAt)}`
        : null,
    ],
    ['Why discarded', v.discardReason],
  ];
  return (
    <dl className="grid gap-x-6 gap-y-2 sm:grid-cols-[12rem_1fr]">
      {rows
        .filter(([, value]) => value)
        .map(([label, value]) => (
          <div key={label} className="contents">
            <dt className="font-semibold text-graphite-400">{label}</dt>
            <dd className="text-graphite-50">{value}</dd>
          </div>
        ))}
    </dl>
  );
}

/** The changes of this version against the one in force now (or, once released, the stored diff). */
function ChangesPanel({
  v,
  inForce,
}: {
  v: RecipeVersionView;
  inForce: { id: string; version: number } | null;
}) {
  const compareWith = v.status === 'released' || v.status === 'retired' ? null : inForce;
  const diff = useDiff(compareWith?.id ?? null, compareWith && compareWith.id !== v.id ? v.id : null);
  if (v.releaseDiff) {
    return (
      <Panel
        title={`Changes stored with the release${v.replaces ? ` (against version ${v.replaces.version})` : ''}`}
      >
        <DiffTable
          changes={v.releaseDiff}
          caption="Changes stored with the release"
          fromLabel={v.replaces ? `Version ${v.replaces.version}` : 'Before'}
          toLabel={`Version ${v.version}`}
        />
      </Panel>
    );
  }
  if (!compareWith) return null;
  return (
    <Panel title={`Changes against version ${compareWith.version}, in force now`} titleId="changes-title">
      {diff.isPending ? (
        <Loading label="Comparing…" />
      ) : diff.isError ? (
        <Alert tone="fault">{diff.error.message}</Alert>
      ) : (
        <DiffTable
          changes={diff.data}
          caption={`Changes from version ${compareWith.version} to version ${v.version}`}
          fromLabel={`Version ${compareWith.version} (in force)`}
          toLabel={`Version ${v.version}`}
        />
      )}
    </Panel>
  );
}

function useVersionAndModel(recipeId: string) {
  const version = useVersion(recipeId);
  const model = useModel(version.data?.modelId ?? '');
  return { version, inForce: model.data?.activeRecipe ?? null, stations: model.data?.stations ?? [] };
}

function Header({ v }: { v: RecipeVersionView }) {
  return (
    <div className="flex flex-wrap items-center gap-3">
      <Link
        to={`/recipes/models/${v.modelId}`}
        className="inline-flex min-h-target items-center text-copper-200 underline underline-offset-4"
      >
        All versions of {v.modelCode}
      </Link>
      <RecipeStatusChip status={v.status} />
    </div>
  );
}

/** One version: the editor while it is a draft (for engineers), its fields otherwise, and its changes. */
export function VersionPage({
  recipeId,
  canChange,
  meId,
}: {
  recipeId: string;
  canChange: boolean;
  meId: string;
}) {
  const { version, inForce, stations } = useVersionAndModel(recipeId);
  const [unsaved, setUnsaved] = useState(false);
  const navigate = useNavigate();
  if (version.isPending) return <Loading label="Loading the version…" />;
  if (version.isError) return <Alert tone="fault">Could not read the version: {version.error.message}</Alert>;
  const v = version.data;
  const editable = v.status === 'draft' && canChange;
  return (
    <div className="flex flex-col gap-6">
      <Header v={v} />
      {v.status === 'draft' && v.reviewComment ? (
        <Alert tone="info" title="Sent back by the reviewer">
          {v.reviewComment}
        </Alert>
      ) : null}
      {v.status === 'discarded' ? (
        <Alert tone="info" title="Discarded draft">
          This draft was discarded and is kept only for the record. Copy it into a new draft from the list of
          versions to start again.
        </Alert>
      ) : null}
      {v.status === 'in_review' ? (
        <Alert tone="info" title="Waiting for review">
          <p>This version cannot change while it is in review.</p>
          <LinkButton className="mt-3" variant="primary" to={`/recipes/versions/${v.id}/review`}>
            Open the review
          </LinkButton>
        </Alert>
      ) : null}
      <Panel title="History">
        <History v={v} />
      </Panel>
      {editable ? (
        <DraftEditor key={`${v.id}:${v.revision}`} version={v} onDirtyChange={setUnsaved} />
      ) : (
        <Panel title={`Fields of version ${v.version}`}>
          <RecipeBodyView body={v.body} caption={`Fields of version ${v.version}`} />
        </Panel>
      )}
      <ChangesPanel v={v} inForce={inForce} />
      <WhatIfPanel recipeId={v.id} version={v.version} stations={stations} canRun={canChange} />
      {v.status === 'draft' ? (
        <ReviewPanel version={v} meId={meId} canChange={canChange} unsaved={unsaved} />
      ) : null}
      {editable ? (
        <DiscardPanel version={v} onDiscarded={() => void navigate(`/recipes/models/${v.modelId}`)} />
      ) : null}
    </div>
  );
}

/** The reviewer's screen: why, what changes, the evidence, and the decision. */
export function ReviewScreen({
  recipeId,
  canChange,
  meId,
}: {
  recipeId: string;
  canChange: boolean;
  meId: string;
}) {
  const { version, inForce, stations } = useVersionAndModel(recipeId);
  if (version.isPending) return <Loading label="Loading the version…" />;
  if (version.isError) return <Alert tone="fault">Could not read the version: {version.error.message}</Alert>;
  const v = version.data;
  return (
    <div className="flex flex-col gap-6">
      <Header v={v} />
      {v.status !== 'in_review' ? (
        <Alert tone="info" title="Not waiting for review">
          Version {v.version} is{' '}
          {v.status === 'draft'
            ? 'a draft'
            : v.status === 'released'
              ? 'in force'
              : v.status === 'discarded'
                ? 'a discarded draft'
                : 'retired'}
          .{' '}
          <Link className="underline" to={`/recipes/versions/${v.id}`}>
            Open the version
          </Link>
          .
        </Alert>
      ) : null}
      <Panel title="Why">
        <History v={v} />
      </Panel>
      <ChangesPanel v={v} inForce={inForce} />
      <WhatIfPanel recipeId={v.id} version={v.version} stations={stations} canRun={canChange} />
      <ReviewPanel version={v} meId={meId} canChange={canChange} unsaved={false} />
      <Panel title={`All fields of version ${v.version}`}>
        <RecipeBodyView body={v.body} caption={`Fields of version ${v.version}`} />
      </Panel>
    </div>
  );
}
