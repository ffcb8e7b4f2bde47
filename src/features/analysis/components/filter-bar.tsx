import { useSearchParams } from 'react-router';
import { ANALYSIS_FIGURES } from '#shared/schemas/analysis';
import { SelectField, TextField } from '#src/components/ui/field';
import { useAnalysisModels, useAnalysisOptions } from '../api/analysis';
import { RANGE_LABELS } from '../api/filter-state';
import { plantInstant, plantLocalInput } from '#shared/time/plant-time';
import { MultiPick } from './multi-pick';

/** Converts between an ISO instant in the URL and the browser's local date-time input. */
/** A stored instant as the plant's local time for a datetime-local field. */
function toPlantInput(iso: string | null, timeZone: string): string {
  if (!iso) return '';
  const d = new Date(iso);
  return Number.isNaN(d.getTime()) ? '' : plantLocalInput(d, timeZone);
}

/** A datetime-local value read as the plant's local time. */
function fromPlantInput(value: string, timeZone: string): string | null {
  if (!value) return null;
  const [date, time] = value.split('T');
  return plantInstant(date, time ?? '00:00', timeZone).toISOString();
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
    // From the address as it is now, not as this render saw it: two changes in one moment (two fields
    // filled one after the other) must both stay.
    const next = new URLSearchParams(window.location.search);
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
  const timeZone = o?.timeZone ?? 'UTC';

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
        hint={
          range !== 'all' && range !== 'custom'
            ? `Plant time (${timeZone}); moves with the clock.`
            : undefined
        }
      />
      {range === 'custom' ? (
        <>
          <TextField
            label={`From (plant time, ${timeZone})`}
            type="datetime-local"
            value={toPlantInput(params.get('from'), timeZone)}
            onChange={(e) => set({ from: fromPlantInput(e.target.value, timeZone) })}
          />
          <TextField
            label={`To (plant time, ${timeZone})`}
            type="datetime-local"
            value={toPlantInput(params.get('to'), timeZone)}
            onChange={(e) => set({ to: fromPlantInput(e.target.value, timeZone) })}
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
