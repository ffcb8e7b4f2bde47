import { useState, type FormEvent } from 'react';
import { createStationSchema, type StationView } from '../../../../shared/schemas/stations';
import type { ModelView } from '../../../../shared/schemas/models';
import { messagesByField } from '../../../../shared/schemas/plain-messages';
import { isApiError } from '../../../lib/api-client';
import { Alert, Loading } from '../../../components/ui/alert';
import { Button } from '../../../components/ui/button';
import { TableFrame, Td, Th } from '../../../components/ui/data-table';
import { Dialog } from '../../../components/ui/dialog';
import { CheckboxField, TextField } from '../../../components/ui/field';
import { StatusChip } from '../../../components/ui/status-chip';
import { formatDateTime, formatRelative } from '../../../lib/format';
import {
  useCreateStation,
  useCreateStationKey,
  useRevokeStationKey,
  useStations,
  useUpdateStation,
} from '../api/stations';
import { useModels } from '../../../lib/queries/models';
import type { StationKeyCreated } from '../../../../shared/schemas/stations';

type StationKey = StationView['keys'][number];
type Notice = { tone: 'ok' | 'fault'; title: string; body: string };

/** Admin → Stations: the stations, the models each may measure, who attends them, and their keys. */
export function StationsAdmin() {
  const stations = useStations();
  const models = useModels();
  const [editing, setEditing] = useState<StationView | 'new' | null>(null);
  const [keyFor, setKeyFor] = useState<StationView | null>(null);
  const [revoking, setRevoking] = useState<{ station: StationView; key: StationKey } | null>(null);
  const [notice, setNotice] = useState<Notice | null>(null);

  return (
    <div className="flex flex-col gap-5">
      {notice ? (
        <Alert tone={notice.tone} title={notice.title}>
          {notice.body}
        </Alert>
      ) : null}
      <div className="flex justify-end">
        <Button variant="primary" size="lg" onClick={() => setEditing('new')}>
          Add a station
        </Button>
      </div>
      {stations.isPending ? <Loading label="Fetching stations…" /> : null}
      {stations.isError ? (
        <Alert tone="fault" title="Stations could not be read">
          {stations.error.message}
        </Alert>
      ) : null}
      {stations.isSuccess ? (
        <TableFrame caption="Calibration stations">
          <thead>
            <tr>
              <Th>Station</Th>
              <Th>Models allowed</Th>
              <Th>Last seen</Th>
              <Th>Attended by</Th>
              <Th>Keys</Th>
              <Th>
                <span className="sr-only">Actions</span>
              </Th>
            </tr>
          </thead>
          <tbody data-testid="station-rows">
            {stations.data.map((s) => (
              <tr key={s.id} className="align-top hover:bg-graphite-850">
                <Td>
                  <span className="block text-lg font-semibold text-graphite-50">{s.name}</span>
                  <span className="text-sm text-graphite-400">{s.line}</span>
                </Td>
                <Td>
                  <span className="flex flex-wrap gap-1.5">
                    {s.allowedModels.map((m) => (
                      <span key={m.id} className="border border-graphite-600 px-2 py-0.5 font-mono text-sm">
                        {m.code}
                      </span>
                    ))}
                  </span>
                </Td>
                <Td>
                  <span title={formatDateTime(s.lastSeenAt)}>{formatRelative(s.lastSeenAt)}</span>
                </Td>
                <Td>{s.attendedBy?.displayName ?? <span className="text-graphite-400">nobody</span>}</Td>
                <Td>
                  <KeyList station={s} onRevoke={(key) => setRevoking({ station: s, key })} />
                </Td>
                <Td>
                  <div className="flex flex-col items-end gap-2">
                    <Button onClick={() => setEditing(s)} aria-label={`Change ${s.name}`}>
                      Change…
                    </Button>
                    <Button onClick={() => setKeyFor(s)} aria-label={`New key for ${s.name}`}>
                      New key…
                    </Button>
                  </div>
                </Td>
              </tr>
            ))}
            {stations.data.length === 0 ? (
              <tr>
                <Td colSpan={6} className="py-8 text-center text-graphite-400">
                  No station yet. Add one, then give it a key.
                </Td>
              </tr>
            ) : null}
          </tbody>
        </TableFrame>
      ) : null}
      <StationDialog
        station={editing}
        models={models.data ?? []}
        onClose={() => setEditing(null)}
        onSaved={(s, created) => {
          setEditing(null);
          setNotice({
            tone: 'ok',
            title: created ? 'Station added' : 'Station changed',
            body: created
              ? `${s.name} exists now. Give it a key so it can post measurements.`
              : `${s.name} is saved.`,
          });
        }}
      />
      <NewKeyDialog station={keyFor} onClose={() => setKeyFor(null)} />
      <RevokeKeyDialog
        target={revoking}
        onClose={() => setRevoking(null)}
        onRevoked={(body) => {
          setRevoking(null);
          setNotice({ tone: 'ok', title: 'Key revoked', body });
        }}
      />
    </div>
  );
}

function KeyList({ station, onRevoke }: { station: StationView; onRevoke: (key: StationKey) => void }) {
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

function StationDialog({
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
  const [name, setName] = useState(station?.name ?? '');
  const [line, setLine] = useState(station?.line ?? '');
  const [allowed, setAllowed] = useState<string[]>(station?.allowedModels.map((m) => m.id) ?? []);
  const [errors, setErrors] = useState<Record<string, string>>({});
  const [banner, setBanner] = useState<string | null>(null);
  const busy = create.isPending || update.isPending;

  const submit = async (event: FormEvent) => {
    event.preventDefault();
    // The same schema as the server's, with the product's plain messages.
    const parsed = createStationSchema.safeParse({ name, line, allowedModelIds: allowed });
    const found = parsed.success ? {} : messagesByField(parsed.error);
    setErrors(found);
    if (!parsed.success) return;
    setBanner(null);
    const body = parsed.data;
    try {
      const saved = station
        ? await update.mutateAsync({ id: station.id, patch: body })
        : await create.mutateAsync(body);
      onSaved(saved, station === null);
    } catch (error) {
      const issues = isApiError(error) ? error.issues : [];
      const onFields: Record<string, string> = {};
      for (const issue of issues) onFields[issue.path.split('.')[0]] ??= issue.message;
      setErrors(onFields);
      setBanner(error instanceof Error ? error.message : 'Not saved.');
    }
  };

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
          value={name}
          error={errors.name}
          onChange={(e) => setName(e.target.value)}
          hint="As written on the panel, e.g. EOL-24."
        />
        <TextField
          label="Line"
          required
          value={line}
          error={errors.line}
          onChange={(e) => setLine(e.target.value)}
        />
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
              setAllowed((a) => (e.target.checked ? [...a, m.id] : a.filter((id) => id !== m.id)))
            }
          />
        ))}
        {errors.allowedModelIds ? (
          <p id="models-error" role="alert" className="text-sm font-medium text-fault">
            {errors.allowedModelIds}
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

function NewKeyDialog({ station, onClose }: { station: StationView | null; onClose: () => void }) {
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
  const [label, setLabel] = useState('');
  const [error, setError] = useState<string | null>(null);
  const [created, setCreated] = useState<StationKeyCreated | null>(null);
  const [copied, setCopied] = useState<'yes' | 'no' | null>(null);

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
    <form
      className="flex flex-col gap-5"
      noValidate
      onSubmit={(event) => {
        event.preventDefault();
        if (label.trim().length < 2) {
          setError('Give the key a label (2 to 60 characters), e.g. the station PC.');
          return;
        }
        setError(null);
        create.mutate(
          { stationId: station.id, label: label.trim() },
          { onSuccess: setCreated, onError: (e) => setError(e.message) },
        );
      }}
    >
      <TextField
        label="Label"
        required
        autoFocus
        value={label}
        error={error ?? undefined}
        hint="Where the key will live, e.g. “EOL-24 PC, 2026 rebuild”."
        onChange={(e) => setLabel(e.target.value)}
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

function RevokeKeyDialog({
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
