// Over 350 lines on purpose for now: the search form, its saved filters and the result table share one
// filter state; it splits into search-form and search-results once the quality work in flight has merged.
import { useMemo, useState, type FormEvent } from 'react';
import { Link } from 'react-router';
import {
  createColumnHelper,
  rowSortingFeature,
  tableFeatures,
  useTable,
  type SortingState,
} from '@tanstack/react-table';
import type { BulkHoldResult, UnitSearchRow } from '../../../../shared/schemas/quality';
import { unitStatusSchema } from '../../../../shared/schemas/units';
import { Alert, Loading } from '../../../components/ui/alert';
import { Button, buttonClass } from '../../../components/ui/button';
import { SortableTableContent, TableFrame } from '../../../components/ui/data-table';
import { SelectField, TextField } from '../../../components/ui/field';
import { formatDateTime } from '../../../lib/format';
import {
  searchParams,
  useSearchChoices,
  useUnitSearch,
  type SearchForm,
  type SearchQuery,
} from '../api/quality';
import { BulkHoldDialog } from './bulk-hold-dialog';
import { CHECK_GUIDE } from '../../../../shared/calibration/check-guide';

/** The checks by the names people read on the traveler and the station screen (their codes stay in the URL). */
const FAILED_CHECK_OPTIONS = [
  { value: '', label: 'Any check' },
  ...Object.entries(CHECK_GUIDE).map(([code, guide]) => ({ value: code, label: guide.name })),
];

// Sorting happens on the server (manual mode): the table only reports which column and direction.
const features = tableFeatures({ rowSortingFeature });
const helper = createColumnHelper<typeof features, UnitSearchRow>();

const STATUS_WORDS: Record<string, string> = {
  new: 'Not calibrated yet',
  calibrated: 'Calibrated',
  failed: 'Failed, retest allowed',
  on_hold: 'On hold',
  scrapped: 'Scrapped',
};

const EMPTY: SearchForm = {
  lot: '',
  serialPrefix: '',
  modelId: '',
  stationId: '',
  status: '',
  verdict: '',
  measuredFrom: '',
  measuredTo: '',
  offsetMinDeg: '',
  offsetMaxDeg: '',
  failedCheck: '',
  programmingMismatch: '',
};

const PAGE_SIZE = 50;

/** datetime-local gives local wall time without a zone; the API wants an instant. */
function toInstant(local: string): string {
  return local ? new Date(local).toISOString() : '';
}

function filtersOf(form: SearchForm): SearchForm {
  return { ...form, measuredFrom: toInstant(form.measuredFrom), measuredTo: toInstant(form.measuredTo) };
}

/**
 * Containment search: filters, one page of results sorted and counted by the server, a selection
 * that survives paging, a hold of the selection or of the whole result, and a CSV of the whole result.
 */
export function ContainmentSearch({ initial }: { initial?: SearchForm }) {
  const [form, setForm] = useState<SearchForm>({ ...EMPTY, ...initial });
  const [applied, setApplied] = useState<SearchForm | null>(
    initial ? filtersOf({ ...EMPTY, ...initial }) : null,
  );
  const [sorting, setSorting] = useState<SortingState>([{ id: 'serial', desc: false }]);
  const [page, setPage] = useState(1);
  const [selected, setSelected] = useState<Set<string>>(new Set());
  const [holding, setHolding] = useState<'selection' | 'all' | null>(null);
  const [done, setDone] = useState<BulkHoldResult | null>(null);
  const choices = useSearchChoices();

  const query: SearchQuery | null = applied
    ? {
        ...applied,
        sort: sorting[0]?.id ?? 'serial',
        dir: sorting[0]?.desc ? 'desc' : 'asc',
        page: String(page),
        pageSize: String(PAGE_SIZE),
      }
    : null;
  const result = useUnitSearch(query);

  const toggle = (serial: string) =>
    setSelected((prev) => {
      const next = new Set(prev);
      if (next.has(serial)) next.delete(serial);
      else next.add(serial);
      return next;
    });

  const columns = useMemo(
    () =>
      helper.columns([
        helper.display({
          id: 'select',
          header: () => <span className="sr-only">Select</span>,
          cell: (info) => (
            <label className="flex size-target cursor-pointer items-center justify-center">
              <input
                type="checkbox"
                className="size-5 accent-copper-400"
                checked={selected.has(info.row.original.serial)}
                onChange={() => toggle(info.row.original.serial)}
                aria-label={`Select ${info.row.original.serial}`}
              />
            </label>
          ),
        }),
        helper.accessor('serial', {
          header: 'Serial',
          cell: (info) => (
            <Link
              to={`/units/${encodeURIComponent(info.getValue())}`}
              className="inline-flex min-h-target items-center font-mono font-semibold"
            >
              {info.getValue()}
            </Link>
          ),
        }),
        helper.accessor('modelCode', { header: 'Model', enableSorting: false }),
        helper.accessor((r) => [r.hallBoardLot, r.magnetRingLot, r.statorLot], {
          id: 'lots',
          header: 'Lots (hall board · magnet · stator)',
          enableSorting: false,
          cell: (info) => (
            <span className="font-mono text-sm">
              {info
                .getValue()
                .map((l) => l ?? '—')
                .join(' · ')}
            </span>
          ),
        }),
        helper.accessor('status', {
          header: 'Status',
          cell: (info) => (
            <span>
              {STATUS_WORDS[info.getValue()]}
              {info.row.original.programmingMismatch ? (
                <span className="block text-sm text-fault">programming mismatch</span>
              ) : null}
            </span>
          ),
        }),
        helper.accessor('currentOffsetDeg', {
          id: 'offsetDeg',
          header: 'Offset',
          cell: (info) => {
            const v = info.getValue();
            return v === null ? <span className="text-graphite-400">none</span> : `${v.toFixed(2)}°`;
          },
        }),
        helper.accessor('updatedAt', {
          header: 'Last change',
          cell: (info) => formatDateTime(info.getValue()),
        }),
      ]),
    [selected],
  );

  const table = useTable({
    features,
    columns,
    data: result.data?.rows ?? [],
    state: { sorting },
    onSortingChange: (updater) => {
      setSorting(updater);
      setPage(1);
    },
    manualSorting: true,
    enableSortingRemoval: false,
    getRowId: (row) => row.id,
  });

  const set = (key: string) => (event: { target: { value: string } }) =>
    setForm((f) => ({ ...f, [key]: event.target.value }));
  const submit = (event: FormEvent) => {
    event.preventDefault();
    setApplied(filtersOf(form));
    setPage(1);
    setSelected(new Set());
    setDone(null);
  };
  const total = result.data?.total ?? 0;
  const pages = Math.max(1, Math.ceil(total / PAGE_SIZE));
  const models = choices.data?.models ?? [];
  const stations = choices.data?.stations ?? [];

  return (
    <div className="flex flex-col gap-5">
      <form
        onSubmit={submit}
        className="grid gap-4 sm:grid-cols-2 lg:grid-cols-4"
        aria-label="Search filters"
      >
        <TextField
          label="Lot (any of the three)"
          value={form.lot}
          onChange={set('lot')}
          placeholder="HB-2446-C"
        />
        <TextField label="Serial starts with" value={form.serialPrefix} onChange={set('serialPrefix')} />
        <SelectField
          label="Model"
          value={form.modelId}
          onChange={set('modelId')}
          options={[
            { value: '', label: 'Any model' },
            ...models.map((m) => ({ value: m.id, label: `${m.code} · ${m.name}` })),
          ]}
        />
        <SelectField
          label="Station"
          value={form.stationId}
          onChange={set('stationId')}
          options={[
            { value: '', label: 'Any station' },
            ...stations.map((s) => ({ value: s.id, label: s.name })),
          ]}
        />
        <SelectField
          label="Status"
          value={form.status}
          onChange={set('status')}
          options={[
            { value: '', label: 'Any status' },
            ...unitStatusSchema.options.map((s) => ({ value: s, label: STATUS_WORDS[s] })),
          ]}
        />
        <SelectField
          label="Verdict of a station result"
          value={form.verdict}
          onChange={set('verdict')}
          options={[
            { value: '', label: 'Any verdict' },
            { value: 'pass', label: 'Pass' },
            { value: 'fail', label: 'Fail' },
            { value: 'unusable', label: 'No result (unusable data)' },
          ]}
        />
        <TextField
          label="Measured from"
          type="datetime-local"
          value={form.measuredFrom}
          onChange={set('measuredFrom')}
        />
        <TextField
          label="Measured until"
          type="datetime-local"
          value={form.measuredTo}
          onChange={set('measuredTo')}
        />
        <TextField
          label="Offset at least (°)"
          type="number"
          step="0.1"
          value={form.offsetMinDeg}
          onChange={set('offsetMinDeg')}
        />
        <TextField
          label="Offset at most (°)"
          type="number"
          step="0.1"
          value={form.offsetMaxDeg}
          onChange={set('offsetMaxDeg')}
        />
        <SelectField
          label="Failed check"
          value={form.failedCheck}
          onChange={set('failedCheck')}
          options={FAILED_CHECK_OPTIONS}
        />
        <SelectField
          label="Programming read-back"
          value={form.programmingMismatch}
          onChange={set('programmingMismatch')}
          options={[
            { value: '', label: 'Any' },
            { value: 'true', label: 'Mismatch' },
            { value: 'false', label: 'No mismatch' },
          ]}
        />
        <div className="flex flex-wrap items-end gap-3 sm:col-span-2 lg:col-span-4">
          <Button type="submit" variant="primary">
            Search
          </Button>
          <Button
            onClick={() => {
              setForm(EMPTY);
              setApplied(null);
              setSelected(new Set());
            }}
          >
            Clear
          </Button>
        </div>
      </form>

      {done ? (
        <Alert tone="ok" title="Hold placed">
          {done.held} unit{done.held === 1 ? '' : 's'} put on hold
          {done.alreadyHeld ? `, ${done.alreadyHeld} already on hold (left as they were)` : ''}
          {done.scrapped ? `, ${done.scrapped} scrapped (left alone)` : ''}
          {done.investigation ? (
            <>
              {' '}
              under{' '}
              <Link to={`/quality/investigations/${done.investigation.id}`}>
                {done.investigation.reference}
              </Link>
            </>
          ) : null}
          .
        </Alert>
      ) : null}

      {!applied ? (
        <p className="text-graphite-300">Choose filters and search. Empty filters match everything.</p>
      ) : result.isPending ? (
        <Loading label="Searching…" />
      ) : result.isError ? (
        <Alert tone="fault" title="The search could not run">
          {result.error.message}
        </Alert>
      ) : (
        <>
          <div className="flex flex-wrap items-center justify-between gap-3">
            <p className="text-lg" aria-live="polite" data-testid="search-total">
              {total === 0
                ? 'No unit matches these filters.'
                : `${total} unit${total === 1 ? '' : 's'} found`}
              {selected.size ? `, ${selected.size} selected` : ''}.
            </p>
            <div className="flex flex-wrap gap-3">
              <a
                className={buttonClass('secondary')}
                href={`/api/quality/units.csv?${searchParams({ ...applied, sort: query!.sort, dir: query!.dir })}`}
                download
              >
                Export CSV ({total})
              </a>
              <Button disabled={selected.size === 0} onClick={() => setHolding('selection')}>
                Hold {selected.size || ''} selected
              </Button>
              <Button variant="primary" disabled={total === 0} onClick={() => setHolding('all')}>
                Hold all {total} found
              </Button>
            </div>
          </div>
          <TableFrame caption="Units matching the search">
            <SortableTableContent
              table={table}
              bodyTestId="search-rows"
              empty="No unit matches these filters."
            />
          </TableFrame>
          <nav aria-label="Result pages" className="flex items-center gap-3">
            <Button disabled={page <= 1} onClick={() => setPage((p) => p - 1)}>
              Previous page
            </Button>
            <span className="tabular-nums">
              Page {page} of {pages}
            </span>
            <Button disabled={page >= pages} onClick={() => setPage((p) => p + 1)}>
              Next page
            </Button>
          </nav>
        </>
      )}
      {applied ? (
        <BulkHoldDialog
          open={holding !== null}
          target={
            holding === 'selection'
              ? { serials: [...selected] }
              : { search: stripEmpty(applied), count: total }
          }
          onClose={() => setHolding(null)}
          onDone={(r) => {
            setDone(r);
            setSelected(new Set());
          }}
        />
      ) : null}
    </div>
  );
}

function stripEmpty(f: SearchForm): Record<string, string> {
  return Object.fromEntries(Object.entries(f).filter(([, v]) => v !== ''));
}
