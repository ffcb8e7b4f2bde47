import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import {
  createStationKeySchema,
  type CreateStationKey,
  type StationKeyCreated,
  type StationView,
} from '#shared/schemas/stations';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { Dialog } from '#src/components/ui/dialog';
import { TextField } from '#src/components/ui/field';
import { StatusChip } from '#src/components/ui/status-chip';
import { applyServerErrors } from '#src/lib/form-errors';
import { formatDateTime, formatRelative } from '#src/lib/format';
import { useCreateStationKey, useRevokeStationKey } from '../api/stations';

/** A station's keys: the list with their use, a new key (shown once), and revoking one. */

export type StationKey = StationView['keys'][number];

export function KeyList({
  station,
  onRevoke,
}: {
  station: StationView;
  onRevoke: (key: StationKey) => void;
}) {
  if (station.keys.length === 0) return <span className="text-graphite-400">no key</span>;
  return (
    <ul className="flex flex-col gap-2">
      {station.keys.map((k) => (
        <li key={k.id} className="flex flex-wrap items-center gap-x-3 gap-y-1">
          <span className="flex flex-col">
            <span className="font-semibold">{k.label}</span>
            <span className="font-mono text-sm text-graphite-400">
              {k.prefix}… · used {formatRelative(k.lastUsedAt)}
            </span>
          </span>
          {k.revokedAt ? (
            <StatusChip tone="neutral" title={`Revoked ${formatDateTime(k.revokedAt)}`}>
              Revoked
            </StatusChip>
          ) : (
            <>
              <StatusChip tone="ok">Active</StatusChip>
              <Button
                variant="quiet"
                onClick={() => onRevoke(k)}
                aria-label={`Revoke key ${k.label} of ${station.name}`}
              >
                Revoke…
              </Button>
            </>
          )}
        </li>
      ))}
    </ul>
  );
}

export function NewKeyDialog({ station, onClose }: { station: StationView | null; onClose: () => void }) {
  return (
    <Dialog
      open={station !== null}
      onClose={onClose}
      title={`New key for ${station?.name ?? ''}`}
      description="The station sends this key with every measurement. Older keys keep working until you revoke them."
    >
      {station ? <NewKeyForm station={station} onClose={onClose} /> : null}
    </Dialog>
  );
}

function NewKeyForm({ station, onClose }: { station: StationView; onClose: () => void }) {
  const create = useCreateStationKey();
  const [banner, setBanner] = useState<string | null>(null);
  const [created, setCreated] = useState<StationKeyCreated | null>(null);
  const [copied, setCopied] = useState<'yes' | 'no' | null>(null);
  const form = useForm<CreateStationKey>({
    resolver: zodResolver(createStationKeySchema),
    defaultValues: { label: '' },
  });
  const submit = form.handleSubmit(async ({ label }) => {
    setBanner(null);
    try {
      setCreated(await create.mutateAsync({ stationId: station.id, label }));
    } catch (error) {
      setBanner(applyServerErrors(error, form.setError, ['label']));
    }
  });

  if (created)
    return (
      <div className="flex flex-col gap-4" data-testid="key-created">
        <Alert tone="info" title="Copy it now: it will not be shown again">
          Only a fingerprint of the key is kept. If it is lost, make a new key and revoke this one.
        </Alert>
        <label className="flex flex-col gap-1.5">
          <span className="text-sm font-semibold tracking-wide text-graphite-200 uppercase">
            Key “{created.label}”
          </span>
          <input
            readOnly
            value={created.key}
            onFocus={(e) => e.target.select()}
            data-testid="new-key"
            className="min-h-target w-full border-2 border-copper-500 bg-graphite-950 px-3 font-mono text-base text-graphite-50"
          />
        </label>
        <div className="flex flex-wrap items-center justify-end gap-3">
          <span role="status" className="text-sm text-graphite-300">
            {copied === 'yes'
              ? 'Copied to the clipboard.'
              : copied === 'no'
                ? 'Copying failed: select the key and copy it by hand.'
                : ''}
          </span>
          <Button
            variant="primary"
            onClick={() =>
              navigator.clipboard
                .writeText(created.key)
                .then(() => setCopied('yes'))
                .catch(() => setCopied('no'))
            }
          >
            Copy key
          </Button>
          <Button onClick={onClose}>I have stored it</Button>
        </div>
      </div>
    );

  return (
    <form className="flex flex-col gap-5" noValidate onSubmit={submit}>
      {banner ? <Alert tone="fault">{banner}</Alert> : null}
      <TextField
        label="Label"
        required
        autoFocus
        error={form.formState.errors.label?.message}
        hint="Where the key will live, e.g. “EOL-24 PC, 2026 rebuild”."
        {...form.register('label')}
      />
      <div className="flex justify-end gap-3">
        <Button onClick={onClose}>Cancel</Button>
        <Button type="submit" variant="primary" busy={create.isPending}>
          Create key
        </Button>
      </div>
    </form>
  );
}

export function RevokeKeyDialog({
  target,
  onClose,
  onRevoked,
}: {
  target: { station: StationView; key: StationKey } | null;
  onClose: () => void;
  onRevoked: (message: string) => void;
}) {
  const revoke = useRevokeStationKey();
  return (
    <Dialog
      open={target !== null}
      onClose={onClose}
      title="Revoke this key?"
      description={
        target
          ? `${target.station.name} can no longer post with “${target.key.label}” (${target.key.prefix}…). This cannot be undone.`
          : undefined
      }
    >
      {target ? (
        <div className="flex flex-col gap-4">
          {revoke.isError ? (
            <Alert tone="fault" title="Not revoked">
              {revoke.error.message}
            </Alert>
          ) : null}
          <div className="flex justify-end gap-3">
            <Button onClick={onClose} autoFocus>
              Keep the key
            </Button>
            <Button
              variant="danger"
              busy={revoke.isPending}
              onClick={() =>
                revoke.mutate(
                  { stationId: target.station.id, keyId: target.key.id },
                  {
                    onSuccess: () =>
                      onRevoked(`“${target.key.label}” of ${target.station.name} no longer works.`),
                  },
                )
              }
            >
              Revoke key
            </Button>
          </div>
        </div>
      ) : null}
    </Dialog>
  );
}
