import { useState } from 'react';
import type { BulkHold, BulkHoldResult, UnitSearchFilter } from '#shared/schemas/quality';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { Dialog } from '#src/components/ui/dialog';
import { SelectField, TextAreaField, TextField } from '#src/components/ui/field';
import { useBulkHold, useInvestigations } from '../api/quality';

type Target = { serials: string[] } | { search: Record<string, string>; count: number };

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
  const [reason, setReason] = useState('');
  const [link, setLink] = useState<'none' | 'new' | string>('none');
  const [title, setTitle] = useState('');
  const [customerRef, setCustomerRef] = useState('');
  const hold = useBulkHold();
  const cases = useInvestigations();
  const count = 'serials' in target ? target.serials.length : target.count;
  const close = () => {
    hold.reset();
    onClose();
  };
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
      <form
        className="flex flex-col gap-5"
        onSubmit={(event) => {
          event.preventDefault();
          const input: BulkHold = {
            ...('serials' in target
              ? { serials: target.serials }
              : { search: target.search as unknown as UnitSearchFilter }),
            reason,
            ...(link === 'new'
              ? { newInvestigation: { title, customerRef: customerRef || undefined } }
              : link !== 'none'
                ? { investigationId: link }
                : {}),
          };
          hold.mutate(input, {
            onSuccess: (r) => {
              onDone(r);
              setReason('');
              setTitle('');
              setCustomerRef('');
              setLink('none');
              onClose();
            },
          });
        }}
      >
        <TextAreaField
          label="Reason for the hold"
          required
          minLength={3}
          value={reason}
          onChange={(e) => setReason(e.target.value)}
          hint="Shown on the station screen and the traveler, and kept in the audit trail."
        />
        <SelectField
          label="Investigation"
          value={link}
          onChange={(e) => setLink(e.target.value)}
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
              minLength={3}
              value={title}
              onChange={(e) => setTitle(e.target.value)}
            />
            <TextField
              label="Customer reference"
              value={customerRef}
              onChange={(e) => setCustomerRef(e.target.value)}
            />
          </div>
        ) : null}
        {hold.isError ? (
          <Alert tone="fault" title="Nothing was held">
            {hold.error.message}
          </Alert>
        ) : null}
        <div className="flex justify-end gap-3">
          <Button onClick={close}>Cancel</Button>
          <Button
            type="submit"
            variant="primary"
            busy={hold.isPending}
            disabled={reason.trim().length < 3 || (link === 'new' && title.trim().length < 3)}
          >
            Hold {count} unit{count === 1 ? '' : 's'}
          </Button>
        </div>
      </form>
    </Dialog>
  );
}
