import { useState } from 'react';
import { HOLD_DISPOSITIONS, type HoldDisposition } from '#shared/schemas/quality';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { Dialog } from '#src/components/ui/dialog';
import { TextAreaField } from '#src/components/ui/field';
import { useRelease } from '../api/quality';
import { DISPOSITION_EFFECTS, DISPOSITION_LABELS } from './quality-format';

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
  const [disposition, setDisposition] = useState<HoldDisposition | ''>('');
  const [reason, setReason] = useState('');
  const release = useRelease();
  const close = () => {
    release.reset();
    onClose();
  };
  return (
    <Dialog
      open={open}
      onClose={close}
      title={serials.length === 1 ? `Release ${serials[0]}` : `Release ${serials.length} units`}
      description="Choose what happens to the units, and say why. Every unit is released, or none is."
    >
      <form
        className="flex flex-col gap-5"
        onSubmit={(event) => {
          event.preventDefault();
          if (!disposition) return;
          release.mutate(
            { serials, disposition, reason },
            {
              onSuccess: (r) => {
                onDone(
                  `${r.released} unit${r.released === 1 ? '' : 's'} released: ${DISPOSITION_LABELS[r.disposition]}.`,
                );
                setReason('');
                setDisposition('');
                onClose();
              },
            },
          );
        }}
      >
        <fieldset className="flex flex-col gap-2">
          <legend className="mb-2 font-semibold">Disposition</legend>
          {HOLD_DISPOSITIONS.map((d) => (
            <label
              key={d}
              className={`flex min-h-target cursor-pointer items-start gap-3 border p-3 ${disposition === d ? 'border-copper-400 bg-graphite-800' : 'border-graphite-700'}`}
            >
              <input
                type="radio"
                name="disposition"
                value={d}
                checked={disposition === d}
                onChange={() => setDisposition(d)}
                className="mt-1 size-5 accent-copper-400"
                required
              />
              <span>
                <span className="block font-semibold">{DISPOSITION_LABELS[d]}</span>
                <span className="block text-sm text-graphite-300">{DISPOSITION_EFFECTS[d]}</span>
              </span>
            </label>
          ))}
        </fieldset>
        <TextAreaField
          label="Reason"
          required
          minLength={3}
          value={reason}
          onChange={(e) => setReason(e.target.value)}
          hint="Kept in the audit trail with each unit."
        />
        {release.isError ? (
          <Alert tone="fault" title="Nothing was released">
            {release.error.message}
          </Alert>
        ) : null}
        <div className="flex justify-end gap-3">
          <Button onClick={close}>Cancel</Button>
          <Button
            type="submit"
            variant={disposition === 'scrap' ? 'danger' : 'primary'}
            busy={release.isPending}
            disabled={!disposition || reason.trim().length < 3}
          >
            {disposition === 'scrap' ? 'Scrap for good' : 'Release'}
          </Button>
        </div>
      </form>
    </Dialog>
  );
}
