import { useState } from 'react';
import type { StationView } from '#shared/schemas/stations';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { QueryState } from '#src/components/ui/query-state';
import { formatDateTime, formatRelative } from '#src/lib/format';
import { useModels } from '#src/lib/queries/models';
import { useStations } from '../api/stations';
import { StationDialog } from './station-form';
import { KeyList, NewKeyDialog, RevokeKeyDialog, type StationKey } from './station-keys';

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
      <QueryState query={stations} pending="Fetching stations…" failed="Stations could not be read">
        {(list) => (
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
              {list.map((s) => (
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
              {list.length === 0 ? (
                <tr>
                  <Td colSpan={6} className="py-8 text-center text-graphite-400">
                    No station yet. Add one, then give it a key.
                  </Td>
                </tr>
              ) : null}
            </tbody>
          </TableFrame>
        )}
      </QueryState>
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
