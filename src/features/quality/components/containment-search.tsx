import { useMemo, useState, type FormEvent, type ReactNode } from 'react';
import { Link, useSearchParams } from 'react-router';
import {
  createColumnHelper,
  rowSortingFeature,
  tableFeatures,
  useTable,
  type SortingState,
} from '@tanstack/react-table';
import { UNIT_SEARCH_FILTER_KEYS, type BulkHoldResult, type UnitSearchRow } from '#shared/schemas/quality';
import { unitStatusSchema } from '#shared/schemas/units';
import { Alert, Loading } from '#src/components/ui/alert';
import { Button, buttonClass } from '#src/components/ui/button';
import { SortableTableContent, TableFrame } from '#src/components/ui/data-table';
import { SelectField, TextField } from '#src/components/ui/field';
import { formatDateTime, localToInstant } from '#src/lib/format';
import {
  searchParams,
  useSearchChoices,
  useUnitSearch,
  type SearchForm,
  type SearchQuery,
} from '../api/quality';
import { BulkHoldDialog } from './bulk-hold-dialog';
import { SavedSearches } from './saved-searches';
import { CHECK_GUIDE } from '#shared/calibration/check-guide';

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

const EMPTY: SearchForm = Object.fromEntries(UNIT_SEARCH_FILTER_KEYS.map((k) => [k, '']));

/** The filters given as a date and time: the form holds local wall time, the URL and the API an instant. */
const TIME_KEYS = ['builtFrom', 'builtTo', 'measuredFrom', 'measuredTo'];

const PAGE_SIZE = 50;

/** An instant as the local wall time a datetime-local field shows (minutes). */
function toLocalInput(instant: string): string {
  const d = new Date(instant);
  if (!instant || Number.isNaN(d.getTime())) return '';
  const local = new Date(d.getTime() - d.getTimezoneOffset() * 60_000);
  return local.toISOString().slice(0, 16);
}

function filtersOf(form: SearchForm): SearchForm {
  const out: SearchForm = { ...form };
  for (const k of TIME_KEYS) out[k] = localToInstant(form[k] ?? '');
  return out;
}

function formOf(filters: SearchForm): SearchForm {
  const out: SearchForm = { ...EMPTY, ...filters };
  for (const k of TIME_KEYS) out[k] = toLocalInput(filters[k] ?? '');
  return out;
}

/** The search filters the URL names (anything else in it, such as the view, is left alone). */
function filtersInUrl(params: URLSearchParams): SearchForm | null {
  const found = UNIT_SEARCH_FILTER_KEYS.filter((k) => params.get(k));
  if (found.length === 0) return params.get('all') === '1' ? { ...EMPTY } : null;
  return { ...EMPTY, ...Object.fromEntries(found.map((k) => [k, params.get(k)!])) };
}

function Group({ legend, hint, children }: { legend: string; hint?: string; children: ReactNode }) {
  return (
    <fieldset className="grid gap-4 border-2 border-graphite-700 p-4 sm:grid-cols-2 lg:grid-cols-4">
      <legend className="px-2 text-base font-semibold text-graphite-100">{legend}</legend>
      {hint ? <p className="text-sm text-graphite-300 sm:col-span-2 lg:col-span-4">{hint}</p> : null}
      {children}
    </fieldset>
  );
}

/**
 * Containment search: filters, one page of results sorted and counted by the server, a selection
 * that survives paging, a hold of the selection or of the whole result, and a CSV of the whole result.
 */
export function ContainmentSearch() {
  // The applied filter lives in the URL, so a search can be bookmarked, sent, or reopened with Back.
  const [params, setParams] = useSearchParams();
  const applied = useMemo(() => filtersInUrl(params), [params]);
  const urlKey = applied ? `?${searchParams(applied)}` : '';
  const [form, setForm] = useState<SearchForm>(() => (applied ? formOf(applied) : EMPTY));
  const [shownKey, setShownKey] = useState(urlKey);
  const [sorting, setSorting] = useState<SortingState>([{ id: 'serial', desc: false }]);
  const [page, setPage] = useState(1);
  const [selected, setSelected] = useState<Set<string>>(new Set());
  const [holding, setHolding] = useState<'selection' | 'all' | null>(null);
  const [done, setDone] = useState<BulkHoldResult | null>(null);
  const choices = useSearchChoices();
  if (shownKey !== urlKey) {
    // The URL changed under the form (Back, a link, a saved search): show what it says.
    setShownKey(urlKey);
    setForm(applied ? formOf(applied) : EMPTY);
    setPage(1);
    setSelected(new Set());
  }

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
  const apply = (filters: SearchForm | null) => {
    const next = new URLSearchParams({ view: 'search' });
    if (filters) for (const [k, v] of Object.entries(filters)) if (v !== '') next.set(k, v);
    // An empty form still searches (every unit): the URL says so, as it says every other filter.
    if (filters && next.size === 1) next.set('all', '1');
    setParams(next);
    setPage(1);
    setSelected(new Set());
    setDone(null);
  };
  const submit = (event: FormEvent) => {
    event.preventDefault();
    const filters = filtersOf(form);
    // An empty form still searches (every unit), so the view keeps a marker in the URL.
    apply(filters);
  };
  const total = result.data?.total ?? 0;
  const pages = Math.max(1, Math.ceil(total / PAGE_SIZE));
  const models = choices.data?.models ?? [];
  const stations = choices.data?.stations ?? [];

  return (
    <div className="flex flex-col gap-5">
      <form onSubmit={submit} className="flex flex-col gap-4" aria-label="Search filters">
        <Group legend="Unit">
          <SelectField
            label="Model"
            value={form.modelId}
            onChange={set('modelId')}
            options={[
              { value: '', label: 'Any model' },
              ...models.map((m) => ({ value: m.id, label: `${m.code} · ${m.name}` })),
            ]}
          />
          <TextField label="Serial starts with" value={form.serialPrefix} onChange={set('serialPrefix')} />
          <TextField
            label="Serial from"
            value={form.serialFrom}
            onChange={set('serialFrom')}
            hint="A range of serials, first and last included"
          />
          <TextField label="Serial to" value={form.serialTo} onChange={set('serialTo')} />
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
            label="Programming read-back"
            value={form.programmingMismatch}
            onChange={set('programmingMismatch')}
            options={[
              { value: '', label: 'Any' },
              { value: 'true', label: 'Mismatch' },
              { value: 'false', label: 'No mismatch' },
            ]}
          />
          <TextField
            label="Built from"
            type="datetime-local"
            value={form.builtFrom}
            onChange={set('builtFrom')}
            hint="When the unit was registered or imported"
          />
          <TextField
            label="Built until"
            type="datetime-local"
            value={form.builtTo}
            onChange={set('builtTo')}
          />
        </Group>
        <Group legend="Parts">
          <TextField
            label="Lot (any of the three)"
            value={form.lot}
            onChange={set('lot')}
            placeholder="HB-2446-C"
          />
          <TextField label="Hall-board lot" value={form.hallBoardLot} onChange={set('hallBoardLot')} />
          <TextField label="Magnet-ring lot" value={form.magnetRingLot} onChange={set('magnetRingLot')} />
          <TextField label="Stator lot" value={form.statorLot} onChange={set('statorLot')} />
        </Group>
        <Group
          legend="Station result"
          hint="These must all hold for the same station result: a unit measured twice is found when one of its results matches every one."
        >
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
            label="Operator at the panel"
            value={form.operatorId}
            onChange={set('operatorId')}
            options={[
              { value: '', label: 'Anyone' },
              ...(choices.data?.operators ?? []).map((o) => ({ value: o.id, label: o.name })),
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
          <SelectField
            label="Recipe version"
            value={form.recipeId}
            onChange={set('recipeId')}
            options={[
              { value: '', label: 'Any recipe version' },
              ...(choices.data?.recipes ?? []).map((r) => ({
                value: r.id,
                label: `${r.modelCode} v${r.version}${r.status === 'retired' ? ' (retired)' : ''}`,
              })),
            ]}
          />
          <SelectField
            label="Engine version"
            value={form.engineVersion}
            onChange={set('engineVersion')}
            options={[
              { value: '', label: 'Any engine version' },
              ...(choices.data?.engineVersions ?? []).map((v) => ({ value: v, label: v })),
              // A version from a saved search or a link that this server no longer runs.
              ...(form.engineVersion && !choices.data?.engineVersions.includes(form.engineVersion)
                ? [{ value: form.engineVersion, label: form.engineVersion }]
                : []),
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
          <SelectField
            label="Failed check"
            value={form.failedCheck}
            onChange={set('failedCheck')}
            options={FAILED_CHECK_OPTIONS}
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
        </Group>
        <div className="flex flex-wrap items-end gap-3">
          <Button type="submit" variant="primary">
            Search
          </Button>
          <Button
            onClick={() => {
              setForm(EMPTY);
              apply(null);
            }}
          >
            Clear
          </Button>
        </div>
      </form>

      <SavedSearches
        current={applied}
        onOpen={(filter) => {
          setForm(formOf(filter));
          apply({ ...EMPTY, ...filter });
        }}
      />

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
