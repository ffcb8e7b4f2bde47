import { useState } from 'react';
import { useFieldArray, useForm, useWatch, type Path } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { plantShiftsSchema, type PlantShifts } from '#shared/schemas/qualification';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { TextField } from '#src/components/ui/field';
import { Panel } from '#src/components/ui/panel';
import { QueryState } from '#src/components/ui/query-state';
import { isApiError } from '#src/lib/api-client';
import { useSetShifts, useShifts } from '../api/qualification';

/**
 * The server's issues onto the rows' fields ("shifts.1.startsAt"); returns the message to show above the
 * list when an issue names no field of a row.
 */
function placeServerErrors(error: unknown, setError: (path: Path<PlantShifts>, message: string) => void) {
  if (!isApiError(error)) return 'Something went wrong. Try again.';
  let unplaced = error.issues.length === 0;
  for (const issue of error.issues) {
    if (/^shifts\.\d+\.(name|startsAt)$/.test(issue.path))
      setError(issue.path as Path<PlantShifts>, issue.message);
    else unplaced = true;
  }
  return unplaced ? error.message : null;
}

function ShiftForm({ initial, timeZone }: { initial: PlantShifts; timeZone: string }) {
  const save = useSetShifts();
  const [banner, setBanner] = useState<string | null>(null);
  const form = useForm<PlantShifts>({
    resolver: zodResolver(plantShiftsSchema),
    defaultValues: { shifts: initial.shifts },
  });
  const rows = useFieldArray({ control: form.control, name: 'shifts' });
  const typed = useWatch({ control: form.control, name: 'shifts' });
  const errors = form.formState.errors.shifts;
  const fieldErrorCount = Array.isArray(errors) ? errors.filter((e) => e?.name || e?.startsAt).length : 0;
  const listError = errors?.message ?? errors?.root?.message;
  const submit = form.handleSubmit(async (values) => {
    setBanner(null);
    try {
      const saved = await save.mutateAsync(values);
      form.reset({ shifts: saved.shifts });
    } catch (e) {
      setBanner(placeServerErrors(e, (path, message) => form.setError(path, { type: 'server', message })));
    }
  });
  return (
    <form onSubmit={submit} noValidate className="flex flex-col gap-4" aria-labelledby="shifts-form-title">
      <h3 id="shifts-form-title" className="text-lg font-semibold text-graphite-100">
        Change the shifts
      </h3>
      <p className="text-graphite-300">
        Times are plant time ({timeZone}), 24-hour clock. Stations whose policy asks for it must read a
        reference unit after each start. An empty list means no shift starts.
      </p>
      {fieldErrorCount ? (
        <Alert tone="fault" title="The shifts were not saved">
          Fix the {fieldErrorCount === 1 ? 'field' : `${fieldErrorCount} fields`} marked below.
        </Alert>
      ) : null}
      <ol className="flex flex-col gap-3">
        {rows.fields.map((r, i) => (
          <li key={r.id} className="grid items-start gap-3 sm:grid-cols-[1fr_12rem_auto]">
            <TextField
              label={`Shift ${i + 1} name`}
              maxLength={40}
              required
              error={errors?.[i]?.name?.message}
              {...form.register(`shifts.${i}.name`)}
            />
            <TextField
              label={`Shift ${i + 1} starts at`}
              type="time"
              required
              error={errors?.[i]?.startsAt?.message}
              {...form.register(`shifts.${i}.startsAt`)}
            />
            <div className="sm:pt-7">
              <Button
                variant="quiet"
                aria-label={`Remove shift ${i + 1}${typed[i]?.name ? ` (${typed[i].name})` : ''}`}
                onClick={() => rows.remove(i)}
              >
                Remove
              </Button>
            </div>
          </li>
        ))}
      </ol>
      {listError ? <Alert tone="fault">{listError}</Alert> : null}
      <div className="flex flex-wrap gap-3">
        <Button disabled={rows.fields.length >= 12} onClick={() => rows.append({ name: '', startsAt: '' })}>
          Add a shift
        </Button>
        <Button type="submit" variant="primary" busy={save.isPending}>
          Save the shifts
        </Button>
      </div>
      {banner ? <Alert tone="fault">{banner}</Alert> : null}
      {save.isSuccess && !form.formState.isDirty ? (
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
