import { useState } from 'react';
import { useForm, useWatch } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import { HOLD_DISPOSITIONS, releaseSchema, type Release } from '#shared/schemas/quality';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { Dialog } from '#src/components/ui/dialog';
import { TextAreaField } from '#src/components/ui/field';
import { applyServerErrors } from '#src/lib/form-errors';
import { useRelease } from '../api/quality';
import { DISPOSITION_EFFECTS, DISPOSITION_LABELS } from './quality-format';

const FIELDS = ['disposition', 'reason'] as const;

/** Release held units with one disposition and a reason (all of them or none). */
export function ReleaseDialog({
  serials,
  open,
  onClose,
  onDone,
}: {
  serials: string[];
  open: boolean;
  onClose: () => void;
  onDone: (message: string) => void;
}) {
  const release = useRelease();
  const [banner, setBanner] = useState<string | null>(null);
  const form = useForm<z.input<typeof releaseSchema>, unknown, Release>({
    resolver: zodResolver(releaseSchema),
    values: { serials, disposition: undefined as unknown as Release['disposition'], reason: '' },
    resetOptions: { keepDirtyValues: true },
  });
  const { errors } = form.formState;
  const disposition = useWatch({ control: form.control, name: 'disposition' });
  const close = () => {
    release.reset();
    setBanner(null);
    form.reset();
    onClose();
  };
  const submit = form.handleSubmit(async (body) => {
    setBanner(null);
    try {
      const r = await release.mutateAsync(body);
      onDone(
        `${r.released} unit${r.released === 1 ? '' : 's'} released: ${DISPOSITION_LABELS[r.disposition]}.`,
      );
      form.reset();
      onClose();
    } catch (error) {
      setBanner(applyServerErrors(error, form.setError, FIELDS));
    }
  });
  return (
    <Dialog
      open={open}
      onClose={close}
      title={serials.length === 1 ? `Release ${serials[0]}` : `Release ${serials.length} units`}
      description="Choose what happens to the units, and say why. Every unit is released, or none is."
    >
      <form className="flex flex-col gap-5" onSubmit={submit} noValidate>
        <fieldset
          className="flex flex-col gap-2"
          aria-invalid={errors.disposition ? true : undefined}
          aria-describedby={errors.disposition ? 'disposition-error' : undefined}
        >
          <legend className="mb-2 font-semibold">Disposition</legend>
          {HOLD_DISPOSITIONS.map((d) => (
            <label
              key={d}
              className={`flex min-h-target cursor-pointer items-start gap-3 border p-3 ${disposition === d ? 'border-copper-400 bg-graphite-800' : 'border-graphite-700'}`}
            >
              <input
                type="radio"
                value={d}
                className="mt-1 size-5 accent-copper-400"
                aria-required
                {...form.register('disposition')}
              />
              <span>
                <span className="block font-semibold">{DISPOSITION_LABELS[d]}</span>
                <span className="block text-sm text-graphite-300">{DISPOSITION_EFFECTS[d]}</span>
              </span>
            </label>
          ))}
          {errors.disposition ? (
            <p id="disposition-error" role="alert" className="text-sm font-medium text-fault">
              {errors.disposition.message}
            </p>
          ) : null}
        </fieldset>
        <TextAreaField
          label="Reason"
          required
          hint="Kept in the audit trail with each unit."
          error={errors.reason?.message}
          {...form.register('reason')}
        />
        {banner ? (
          <Alert tone="fault" title="Nothing was released">
            {banner}
          </Alert>
        ) : null}
        <div className="flex justify-end gap-3">
          <Button onClick={close}>Cancel</Button>
          <Button
            type="submit"
            variant={disposition === 'scrap' ? 'danger' : 'primary'}
            busy={release.isPending}
          >
            {disposition === 'scrap' ? 'Scrap for good' : 'Release'}
          </Button>
        </div>
      </form>
    </Dialog>
  );
}
