import { useSearchParams } from 'react-router';
import { ANALYSIS_FIGURES } from '../../../../shared/schemas/analysis';
import { SelectField, TextField } from '../../../components/ui/field';
import { useAnalysisModels, useAnalysisOptions } from '../api/analysis';
import { RANGE_LABELS } from '../api/filter-state';
import { MultiPick } from './multi-pick';


/** Converts between an ISO instant in the URL and the browser's local date-time input. */
function toLocalInput(iso: string | null): string {
  if (!iso) return '';
  const d = new Date(iso);
  if (Number.isNaN(d.getTime())) return '';
  const pad = (n: number) => String(n).padStart(2, '0');
  return `${d.getFullYear()}-${pad(d.getMonth() + 1)}-${pad(d.getDate())}T${pad(d.getHours())}:${pad(d.getMinutes())}`;
}

/**
 * One filter bar for every view. Each change writes the URL (a new history entry), which is the only state:
 * the views read their query from it.
 */
export function FilterBar() {
  const [params, setParams] = useSearchParams();
  const models = useAnalysisModels();
  const model = params.get('model');
  const options = useAnalysisOptions(model);
  const o = options.data;

  const set = (changes: Record<string, string | null>) => {
    const next = new URLSearchParams(params);
    for (const [k, v] of Object.entries(changes)) {
      if (v === null || v === '') next.delete(k);
      else next.set(k, v);
    }
    setParams(next);
  };

  /** A list filter: comma-separated in the URL, several values at once. */
  const list = (key: string, label: string, choices: { value: string; label: string }[] | undefined) => {
    const chosen = (params.get(key) ?? '').split(',').filter((v) => v.length > 0);
    return (
      <MultiPick
        label={label}
        chosen={chosen}
        choices={choices}
        disabled={!o}
        onChange={(next) => set({ [key]: next.length ? next.join(',') : null })}
      />
    );
  };

  const range = params.get('range') ?? 'all';

  return (
    <form
      className="grid grid-cols-1 gap-4 sm:grid-cols-2 lg:grid-cols-4 xl:grid-cols-6"
      aria-label="Filter"
      onSubmit={(e) => e.preventDefault()}
    >
      <SelectField
        label="Model"
        required
        value={model ?? ''}
        onChange={(e) =>
          set({
            model: e.target.value,
            stations: null,
            hallBoardLots: null,
            magnetRingLots: null,
            statorLots: null,
            operators: null,
            recipeVersions: null,
          })
        }
        options={[
          { value: '', label: models.isPending ? 'Loading…' : 'Choose a model' },
          ...(models.data ?? []).map((m) => ({ value: m.id, label: `${m.code} · ${m.name}` })),
        ]}
      />
      <SelectField
        label="Figure"
        value={params.get('figure') ?? 'offsetDeg'}
        onChange={(e) => set({ figure: e.target.value === 'offsetDeg' ? null : e.target.value })}
        options={Object.entries(ANALYSIS_FIGURES).map(([value, f]) => ({
          value,
          label: `${f.label} (${f.unit})`,
        }))}
      />
      {list(
        'stations',
        'Stations',
        o?.stations.map((s) => ({ value: s.id, label: s.name })),
      )}
      {list(
        'hallBoardLots',
        'Hall-board lots',
        o?.hallBoardLots.map((l) => ({ value: l, label: l })),
      )}
      {list(
        'magnetRingLots',
        'Magnet-ring lots',
        o?.magnetRingLots.map((l) => ({ value: l, label: l })),
      )}
      {list(
        'statorLots',
        'Stator lots',
        o?.statorLots.map((l) => ({ value: l, label: l })),
      )}
      {list(
        'operators',
        'Operators',
        o?.operators.map((p) => ({ value: p.id, label: p.name })),
      )}
      {list(
        'recipeVersions',
        'Recipe versions',
        o?.recipeVersions.map((v) => ({ value: String(v), label: `Version ${v}` })),
      )}
      <SelectField
        label="Time range"
        value={range}
        onChange={(e) =>
          set({
            range: e.target.value === 'all' ? null : e.target.value,
            ...(e.target.value === 'custom' ? {} : { from: null, to: null }),
          })
        }
        options={Object.entries(RANGE_LABELS).map(([value, label]) => ({ value, label }))}
      />
      {range === 'custom' ? (
        <>
          <TextField
            label="From (local time)"
            type="datetime-local"
            value={toLocalInput(params.get('from'))}
            onChange={(e) => set({ from: e.target.value ? new Date(e.target.value).toISOString() : null })}
          />
          <TextField
            label="To (local time)"
            type="datetime-local"
            value={toLocalInput(params.get('to'))}
            onChange={(e) => set({ to: e.target.value ? new Date(e.target.value).toISOString() : null })}
          />
        </>
      ) : null}
      <SelectField
        label="Verdict"
        value={params.get('verdict') ?? 'all'}
        onChange={(e) => set({ verdict: e.target.value === 'all' ? null : e.target.value })}
        options={[
          { value: 'all', label: 'Pass and fail' },
          { value: 'pass', label: 'Passed only' },
          { value: 'fail', label: 'Failed only' },
        ]}
      />
      <SelectField
        label="Attempts"
        value={params.get('attempts') ?? 'all'}
        onChange={(e) => set({ attempts: e.target.value === 'all' ? null : e.target.value })}
        options={[
          { value: 'all', label: 'Every attempt' },
          { value: 'first', label: 'First attempt only' },
        ]}
      />
      <SelectField
        label="Results"
        value={params.get('purpose') ?? 'station'}
        onChange={(e) => set({ purpose: e.target.value === 'station' ? null : e.target.value })}
        options={[
          { value: 'station', label: 'As the stations got them' },
          { value: 'recompute', label: 'Engineers’ recomputations' },
        ]}
      />
    </form>
  );
}
