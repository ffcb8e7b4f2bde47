import { useState, type FormEvent } from 'react';
import { plantShiftsSchema, type PlantShifts } from '#shared/schemas/qualification';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { TextField } from '#src/components/ui/field';
import { Panel } from '#src/components/ui/panel';
import { QueryState } from '#src/components/ui/query-state';
import { isApiError } from '#src/lib/api-client';
import { useSetShifts, useShifts } from '../api/qualification';

type Row = { key: number; name: string; startsAt: string };

/** Field errors by "index.field" from the schema's (or the server's) issues, e.g. "1.startsAt". */
function errorsByField(issues: { path: string; message: string }[]): Map<string, string> {
  const out = new Map<string, string>();
  for (const i of issues) {
    const key = i.path.replace(/^shifts\./, '');
    if (!out.has(key)) out.set(key, i.message);
  }
  return out;
}

function ShiftForm({ initial, timeZone }: { initial: PlantShifts; timeZone: string }) {
  const save = useSetShifts();
  const [nextKey, setNextKey] = useState(initial.shifts.length);
  const [rows, setRows] = useState<Row[]>(initial.shifts.map((s, i) => ({ key: i, ...s })));
  const [issues, setIssues] = useState<{ path: string; message: string }[]>([]);
  const [dirty, setDirty] = useState(false);
  const change = (key: number, patch: Partial<Row>) => {
    setRows(rows.map((r) => (r.key === key ? { ...r, ...patch } : r)));
    setDirty(true);
  };
  const submit = (e: FormEvent) => {
    e.preventDefault();
    const input = { shifts: rows.map((r) => ({ name: r.name, startsAt: r.startsAt })) };
    const checked = plantShiftsSchema.safeParse(input);
    if (!checked.success) {
      setIssues(
        checked.error.issues.map((i) => ({
          path: ['shifts', ...i.path.slice(1)].join('.'),
          message: i.message,
        })),
      );
      return;
    }
    setIssues([]);
    save.mutate(checked.data, {
      onSuccess: (saved) => {
        setRows(saved.shifts.map((s, i) => ({ key: nextKey + i, ...s })));
        setNextKey(nextKey + saved.shifts.length);
        setDirty(false);
      },
      onError: (err) => setIssues(isApiError(err) ? err.issues : []),
    });
  };
  const fieldErrors = errorsByField(issues);
  return (
    <form onSubmit={submit} noValidate className="flex flex-col gap-4" aria-labelledby="shifts-form-title">
      <h3 id="shifts-form-title" className="text-lg font-semibold text-graphite-100">
        Change the shifts
      </h3>
      <p className="text-graphite-300">
        Times are plant time ({timeZone}), 24-hour clock. Stations whose policy asks for it must read a
        reference unit after each start. An empty list means no shift starts.
      </p>
      {issues.length ? (
        <Alert tone="fault" title="The shifts were not saved">
          Fix the {issues.length === 1 ? 'field' : `${issues.length} fields`} marked below.
        </Alert>
      ) : null}
      <ol className="flex flex-col gap-3">
        {rows.map((r, i) => (
          <li key={r.key} className="grid items-start gap-3 sm:grid-cols-[1fr_12rem_auto]">
            <TextField
              label={`Shift ${i + 1} name`}
              value={r.name}
              maxLength={40}
              required
              error={fieldErrors.get(`${i}.name`)}
              onChange={(e) => change(r.key, { name: e.target.value })}
            />
            <TextField
              label={`Shift ${i + 1} starts at`}
              type="time"
              value={r.startsAt}
              required
              error={fieldErrors.get(`${i}.startsAt`)}
              onChange={(e) => change(r.key, { startsAt: e.target.value })}
            />
            <div className="sm:pt-7">
              <Button
                variant="quiet"
                aria-label={`Remove shift ${i + 1}${r.name ? ` (${r.name})` : ''}`}
                onClick={() => {
                  setRows(rows.filter((x) => x.key !== r.key));
                  setDirty(true);
                }}
              >
                Remove
              </Button>
            </div>
          </li>
        ))}
      </ol>
      {fieldErrors.get('') ? <Alert tone="fault">{fieldErrors.get('')}</Alert> : null}
      <div className="flex flex-wrap gap-3">
        <Button
          disabled={rows.length >= 12}
          onClick={() => {
            setRows([...rows, { key: nextKey, name: '', startsAt: '' }]);
            setNextKey(nextKey + 1);
            setDirty(true);
          }}
        >
          Add a shift
        </Button>
        <Button type="submit" variant="primary" busy={save.isPending}>
          Save the shifts
        </Button>
      </div>
      {save.error && !isApiError(save.error) ? <Alert tone="fault">{save.error.message}</Alert> : null}
      {save.error && isApiError(save.error) && !save.error.issues.length ? (
        <Alert tone="fault">{save.error.message}</Alert>
      ) : null}
      {save.isSuccess && !dirty ? (
        <Alert tone="ok">Shifts saved; the change is in the audit log.</Alert>
      ) : null}
    </form>
  );
}

/**
 * The plant's shifts: when each starts (local plant time). A station whose qualification policy says "at
 * every shift start" must read a reference unit after each of these. Engineers change them; quality reads.
 */
export function ShiftsEditor({ canEdit }: { canEdit: boolean }) {
  const shifts = useShifts();
  return (
    <QueryState query={shifts} pending="Reading the shifts…" failed="The shifts could not be read">
      {(data) => <ShiftsView data={data} canEdit={canEdit} />}
    </QueryState>
  );
}

function ShiftsView({ data, canEdit }: { data: PlantShifts & { timeZone: string }; canEdit: boolean }) {
  const { timeZone } = data;
  return (
    <div className="flex flex-col gap-5">
      <Panel title="Shifts now" titleId="shifts-now-title">
        {data.shifts.length ? (
          <TableFrame caption={`Plant shifts, by start (plant time, ${timeZone})`}>
            <thead>
              <tr>
                <Th>Shift</Th>
                <Th>Starts at</Th>
              </tr>
            </thead>
            <tbody data-testid="shift-rows">
              {data.shifts.map((s) => (
                <tr key={`${s.name}-${s.startsAt}`}>
                  <Td className="font-semibold">{s.name}</Td>
                  <Td>{s.startsAt}</Td>
                </tr>
              ))}
            </tbody>
          </TableFrame>
        ) : (
          <p className="text-graphite-300">
            No shifts: a policy "at every shift start" never falls due by itself.
          </p>
        )}
      </Panel>
      {canEdit ? (
        <Panel>
          <ShiftForm key={JSON.stringify(data.shifts)} initial={data} timeZone={timeZone} />
        </Panel>
      ) : (
        <p className="text-graphite-300">Engineers change the shifts.</p>
      )}
    </div>
  );
}
