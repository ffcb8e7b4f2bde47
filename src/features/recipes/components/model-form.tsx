import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import { modelInputSchema, type ModelDetailView } from '#shared/schemas/recipes';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { TextAreaField, TextField } from '#src/components/ui/field';
import { applyServerErrors } from '#src/lib/form-errors';
import { useCreateModel, useUpdateModel } from '../api/recipes';

type Values = z.output<typeof modelInputSchema>;
const FIELDS = ['code', 'name', 'polePairs', 'reason'] as const;

/** Create a model, or change one; either way with a reason for the audit log. */
export function ModelForm({
  model,
  onDone,
  onCancel,
}: {
  model: ModelDetailView | null;
  onDone: (m: ModelDetailView) => void;
  onCancel: () => void;
}) {
  const create = useCreateModel();
  const update = useUpdateModel(model?.id ?? '');
  const [banner, setBanner] = useState<string | null>(null);
  const form = useForm<z.input<typeof modelInputSchema>, unknown, Values>({
    resolver: zodResolver(modelInputSchema),
    defaultValues: {
      code: model?.code ?? '',
      name: model?.name ?? '',
      polePairs: model?.polePairs ?? 4,
      reason: '',
    },
  });
  const { errors, isSubmitting } = form.formState;
  const submit = form.handleSubmit(async (values) => {
    setBanner(null);
    try {
      onDone(await (model ? update : create).mutateAsync(values));
    } catch (e) {
      setBanner(applyServerErrors(e, form.setError, FIELDS));
    }
  });
  return (
    <form onSubmit={submit} noValidate className="flex flex-col gap-4">
      {banner ? <Alert tone="fault">{banner}</Alert> : null}
      <TextField label="Model code" required error={errors.code?.message} {...form.register('code')} />
      <TextField label="Name" required error={errors.name?.message} {...form.register('name')} />
      <TextField
        label="Pole pairs"
        type="number"
        inputMode="numeric"
        required
        hint="Electrical angle = pole pairs × mechanical angle. Fixed once units are built."
        error={errors.polePairs?.message}
        {...form.register('polePairs', { valueAsNumber: true })}
      />
      <TextAreaField
        label="Reason for this change"
        required
        hint="Goes into the audit log with the values before and after."
        error={errors.reason?.message}
        {...form.register('reason')}
      />
      <div className="flex flex-wrap gap-3">
        <Button type="submit" variant="primary" busy={isSubmitting}>
          {model ? 'Save model' : 'Create model'}
        </Button>
        <Button onClick={onCancel}>Cancel</Button>
      </div>
    </form>
  );
}
