import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import { bulkHoldSchema, type BulkHold, type BulkHoldResult } from '#shared/schemas/quality';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { Dialog } from '#src/components/ui/dialog';
import { SelectField, TextAreaField, TextField } from '#src/components/ui/field';
import { applyServerErrors } from '#src/lib/form-errors';
import { useBulkHold, useInvestigations } from '../api/quality';

type Target = { serials: string[] } | { search: Record<string, string>; count: number };
type BulkHoldInput = z.input<typeof bulkHoldSchema>;

const FIELDS = ['reason', 'investigationId', 'newInvestigation'] as const;
/** The new case's fields leave the values when they are hidden, so the schema sees no new investigation. */
const NEW_CASE_FIELD = { shouldUnregister: true } as const;

/**
 * Holds a selection or a whole search result with a reason, optionally under an investigation (an
 * open one, or a new one opened with the hold). One transaction on the server: all or none.
 */
export function BulkHoldDialog({
  target,
  open,
  onClose,
  onDone,
}: {
  target: Target;
  open: boolean;
  onClose: () => void;
  onDone: (r: BulkHoldResult) => void;
}) {
  const hold = useBulkHold();
  const cases = useInvestigations();
  const [link, setLink] = useState<'none' | 'new' | string>('none');
  const [banner, setBanner] = useState<string | null>(null);
  const form = useForm<BulkHoldInput, unknown, BulkHold>({
    resolver: zodResolver(bulkHoldSchema),
    values: {
      ...('serials' in target ? { serials: target.serials } : { search: target.search }),
      reason: '',
      investigationId: '',
    },
    resetOptions: { keepDirtyValues: true },
  });
  const { errors } = form.formState;
  const count = 'serials' in target ? target.serials.length : target.count;
  const close = () => {
    hold.reset();
    setBanner(null);
    setLink('none');
    form.reset();
    onClose();
  };
  const submit = form.handleSubmit(async (body) => {
    setBanner(null);
    try {
      onDone(await hold.mutateAsync(body));
      setLink('none');
      form.reset();
      onClose();
    } catch (error) {
      setBanner(applyServerErrors(error, form.setError, FIELDS));
    }
  });
  const openCases = (cases.data ?? []).filter((c) => c.status !== 'closed');
  return (
    <Dialog
      open={open}
      onClose={close}
      title={`Hold ${count} unit${count === 1 ? '' : 's'}`}
      description={
        'serials' in target
          ? 'The selected units go on hold. Units already on hold stay held once.'
          : 'Every unit the search finds goes on hold, in one step. Units already on hold stay held once.'
      }
    >
      <form className="flex flex-col gap-5" onSubmit={submit} noValidate>
        <TextAreaField
          label="Reason for the hold"
          required
          hint="Shown on the station screen and the traveler, and kept in the audit trail."
          error={errors.reason?.message}
          {...form.register('reason')}
        />
        <SelectField
          label="Investigation"
          value={link}
          error={errors.investigationId?.message}
          onChange={(e) => {
            setLink(e.target.value);
            const existing = e.target.value === 'none' || e.target.value === 'new' ? '' : e.target.value;
            form.setValue('investigationId', existing);
          }}
          options={[
            { value: 'none', label: 'None' },
            { value: 'new', label: 'Open a new investigation…' },
            ...openCases.map((c) => ({ value: c.id, label: `${c.reference} · ${c.title}` })),
          ]}
        />
        {link === 'new' ? (
          <div className="grid gap-4 sm:grid-cols-2">
            <TextField
              label="Case title"
              required
              error={errors.newInvestigation?.title?.message ?? errors.newInvestigation?.message}
              {...form.register('newInvestigation.title', NEW_CASE_FIELD)}
            />
            <TextField
              label="Customer reference"
              error={errors.newInvestigation?.customerRef?.message}
              {...form.register('newInvestigation.customerRef', NEW_CASE_FIELD)}
            />
          </div>
        ) : null}
        {banner ? (
          <Alert tone="fault" title="Nothing was held">
            {banner}
          </Alert>
        ) : null}
        <div className="flex justify-end gap-3">
          <Button onClick={close}>Cancel</Button>
          <Button type="submit" variant="primary" busy={hold.isPending}>
            Hold {count} unit{count === 1 ? '' : 's'}
          </Button>
        </div>
      </form>
    </Dialog>
  );
}
