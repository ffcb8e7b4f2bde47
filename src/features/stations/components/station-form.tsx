import { useState } from 'react';
import { useForm, useWatch } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { ModelView } from '#shared/schemas/models';
import { createStationSchema, type CreateStation, type StationView } from '#shared/schemas/stations';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { Dialog } from '#src/components/ui/dialog';
import { CheckboxField, TextField } from '#src/components/ui/field';
import { applyServerErrors } from '#src/lib/form-errors';
import { useCreateStation, useUpdateStation } from '../api/stations';

const FIELDS = ['name', 'line', 'allowedModelIds'] as const;

/** Adding or changing a station, in a dialog. */
export function StationDialog({
  station,
  models,
  onClose,
  onSaved,
}: {
  station: StationView | 'new' | null;
  models: ModelView[];
  onClose: () => void;
  onSaved: (station: StationView, created: boolean) => void;
}) {
  const creating = station === 'new';
  return (
    <Dialog
      open={station !== null}
      onClose={onClose}
      title={creating ? 'Add a station' : `Change ${station?.name ?? ''}`}
      description="A station measures only the models allowed here; a unit of another model is refused."
    >
      {station !== null ? (
        <StationForm
          station={creating ? null : station}
          models={models}
          onCancel={onClose}
          onSaved={onSaved}
        />
      ) : null}
    </Dialog>
  );
}

/** The station's name, line and allowed models, checked by the server's own schema before sending. */
function StationForm({
  station,
  models,
  onCancel,
  onSaved,
}: {
  station: StationView | null;
  models: ModelView[];
  onCancel: () => void;
  onSaved: (station: StationView, created: boolean) => void;
}) {
  const create = useCreateStation();
  const update = useUpdateStation();
  const [banner, setBanner] = useState<string | null>(null);
  const form = useForm<CreateStation>({
    resolver: zodResolver(createStationSchema),
    defaultValues: {
      name: station?.name ?? '',
      line: station?.line ?? '',
      allowedModelIds: station?.allowedModels.map((m) => m.id) ?? [],
    },
  });
  const { errors } = form.formState;
  const allowed = useWatch({ control: form.control, name: 'allowedModelIds' });
  const busy = create.isPending || update.isPending;

  const submit = form.handleSubmit(async (body) => {
    setBanner(null);
    try {
      const saved = station
        ? await update.mutateAsync({ id: station.id, patch: body })
        : await create.mutateAsync(body);
      onSaved(saved, station === null);
    } catch (error) {
      applyServerErrors(error, form.setError, FIELDS);
      setBanner(error instanceof Error ? error.message : 'Not saved.');
    }
  });

  return (
    <form onSubmit={submit} noValidate className="flex flex-col gap-5" aria-label="Station">
      {banner ? (
        <Alert tone="fault" title="Not saved">
          {banner}
        </Alert>
      ) : null}
      <div className="grid gap-5 sm:grid-cols-2">
        <TextField
          label="Name"
          required
          autoFocus
          error={errors.name?.message}
          hint="As written on the panel, e.g. EOL-24."
          {...form.register('name')}
        />
        <TextField label="Line" required error={errors.line?.message} {...form.register('line')} />
      </div>
      <fieldset
        className="flex flex-col gap-1 border border-graphite-700 p-4"
        aria-describedby={errors.allowedModelIds ? 'models-error' : undefined}
      >
        <legend className="px-2 text-sm font-semibold tracking-wide text-graphite-200 uppercase">
          Models allowed
        </legend>
        {models.length === 0 ? <p className="text-graphite-400">No model exists yet.</p> : null}
        {models.map((m) => (
          <CheckboxField
            key={m.id}
            label={`${m.code} · ${m.name}${m.activeRecipe ? '' : ' (no released recipe)'}`}
            checked={allowed.includes(m.id)}
            onChange={(e) =>
              form.setValue(
                'allowedModelIds',
                e.target.checked ? [...allowed, m.id] : allowed.filter((id) => id !== m.id),
                { shouldValidate: form.formState.isSubmitted },
              )
            }
          />
        ))}
        {errors.allowedModelIds ? (
          <p id="models-error" role="alert" className="text-sm font-medium text-fault">
            {errors.allowedModelIds.message}
          </p>
        ) : null}
      </fieldset>
      <div className="flex flex-wrap justify-end gap-3">
        <Button onClick={onCancel}>Cancel</Button>
        <Button type="submit" variant="primary" busy={busy}>
          {station ? 'Save' : 'Add station'}
        </Button>
      </div>
    </form>
  );
}
