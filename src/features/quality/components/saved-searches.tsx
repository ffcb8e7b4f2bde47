import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { newSavedSearchSchema } from '#shared/schemas/quality';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { TextField } from '#src/components/ui/field';
import { applyServerErrors } from '#src/lib/form-errors';
import { formatDateTime } from '#src/lib/format';
import { useDeleteSavedSearch, useSaveSearch, useSavedSearches, type SearchForm } from '../api/quality';

/** The form checks the name; the filter is the search shown now, which the server's schema checks too. */
const nameSchema = newSavedSearchSchema.pick({ name: true });

function nonEmpty(f: SearchForm): SearchForm {
  return Object.fromEntries(Object.entries(f).filter(([, v]) => v !== ''));
}

/**
 * Searches saved under a name, shared by the team: save the search shown now, open one (it fills the
 * form and runs), or delete one you saved.
 */
export function SavedSearches({
  current,
  onOpen,
}: {
  current: SearchForm | null;
  onOpen: (filter: SearchForm) => void;
}) {
  const list = useSavedSearches();
  const save = useSaveSearch();
  const remove = useDeleteSavedSearch();
  const [banner, setBanner] = useState<string | null>(null);
  const form = useForm<{ name: string }>({ resolver: zodResolver(nameSchema), defaultValues: { name: '' } });
  const filter = current ? nonEmpty(current) : {};
  const canSave = Object.keys(filter).length > 0;

  const submit = form.handleSubmit(async ({ name }) => {
    setBanner(null);
    try {
      await save.mutateAsync({ name, filter });
      form.reset({ name: '' });
    } catch (error) {
      setBanner(applyServerErrors(error, form.setError, ['name']));
    }
  });

  return (
    <section aria-labelledby="saved-searches-heading" className="flex flex-col gap-3">
      <h2 id="saved-searches-heading" className="text-xl font-semibold">
        Saved searches
      </h2>
      <form
        onSubmit={submit}
        noValidate
        className="flex flex-wrap items-end gap-3"
        aria-label="Save this search"
      >
        <div className="min-w-64 flex-1">
          <TextField
            label="Name for this search"
            hint={
              canSave
                ? 'Saves the filters of the search shown below, for the whole quality team.'
                : 'Run a search with at least one filter first.'
            }
            error={form.formState.errors.name?.message ?? banner ?? undefined}
            {...form.register('name')}
          />
        </div>
        <Button type="submit" disabled={!canSave} busy={save.isPending}>
          Save this search
        </Button>
      </form>
      {remove.error ? (
        <Alert tone="fault" title="Not deleted">
          {remove.error.message}
        </Alert>
      ) : null}
      {list.isError ? (
        <Alert tone="fault" title="Saved searches could not be read">
          {list.error.message}
        </Alert>
      ) : list.data && list.data.length === 0 ? (
        <p className="text-graphite-300">No saved searches yet.</p>
      ) : (
        <ul
          className="flex flex-col divide-y divide-graphite-700 border-y border-graphite-700"
          data-testid="saved-searches"
        >
          {(list.data ?? []).map((s) => (
            <li key={s.id} className="flex flex-wrap items-center justify-between gap-3 py-2">
              <div>
                <p className="font-semibold">{s.name}</p>
                <p className="text-sm text-graphite-300">
                  {Object.keys(s.filter).length} filter{Object.keys(s.filter).length === 1 ? '' : 's'} · saved
                  by {s.savedBy} · {formatDateTime(s.createdAt)}
                </p>
              </div>
              <div className="flex gap-2">
                <Button onClick={() => onOpen(s.filter)} aria-label={`Open saved search ${s.name}`}>
                  Open
                </Button>
                {s.mine ? (
                  <Button
                    onClick={() => remove.mutate(s.id)}
                    disabled={remove.isPending}
                    aria-label={`Delete saved search ${s.name}`}
                  >
                    Delete
                  </Button>
                ) : null}
              </div>
            </li>
          ))}
        </ul>
      )}
    </section>
  );
}
