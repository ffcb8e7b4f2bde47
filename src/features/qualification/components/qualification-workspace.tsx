// Over 350 lines on purpose for now: four small panels of one station (lock, policy, reference units,
// readings); each moves to its own file once the qualification work in flight has merged.
import { formatSignedDeg } from '#shared/wording';
import { useState, type FormEvent } from 'react';
import { useForm, type Resolver } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { createReferenceUnitSchema, type CreateReferenceUnit } from '#shared/schemas/qualification';
import { Alert, Loading } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { CheckboxField, SelectField, TextField } from '#src/components/ui/field';
import { Panel } from '#src/components/ui/panel';
import { applyServerErrors } from '#src/lib/form-errors';
import {
  useCreateReferenceUnit,
  useShifts,
  useLiftLock,
  useReferenceUnits,
  useSetPolicy,
  useStationPolicy,
  useStationQualification,
  useStationReadings,
} from '../api/qualification';
import { BiasChart } from './bias-chart';
import { CertifyPanel } from './certify-panel';
import { QualificationBanner } from './qualification-banner';

type StationChoice = { id: string; name: string };

/** The plant time zone (the shifts answer carries it). */
function useShiftsTimeZone(): string {
  return useShifts().data?.timeZone ?? 'UTC';
}

function LiftLockForm({ stationId }: { stationId: string }) {
  const lift = useLiftLock();
  const [reason, setReason] = useState('');
  const [minutes, setMinutes] = useState('60');
  const submit = (e: FormEvent) => {
    e.preventDefault();
    lift.mutate({ stationId, reason, minutes: Number(minutes) });
  };
  return (
    <form onSubmit={submit} className="flex flex-col gap-3" aria-labelledby="lift-title">
      <h3 id="lift-title" className="text-lg font-semibold text-graphite-100">
        Lift the lock for a while
      </h3>
      <p className="text-graphite-300">
        Production is accepted until the time runs out; the reason is kept in the audit log. Measure a
        reference unit as soon as you can.
      </p>
      <TextField
        label="Reason"
        value={reason}
        onChange={(e) => setReason(e.target.value)}
        required
        minLength={5}
      />
      <TextField
        label="For how long (minutes, 5 to 480)"
        type="number"
        min={5}
        max={480}
        value={minutes}
        onChange={(e) => setMinutes(e.target.value)}
        required
      />
      {lift.error ? <Alert tone="fault">{lift.error.message}</Alert> : null}
      {lift.data ? (
        <Alert tone="ok">
          Lock lifted until {new Date(lift.data.override.expiresAt).toLocaleTimeString()}.
        </Alert>
      ) : null}
      <div>
        <Button type="submit" variant="danger" busy={lift.isPending}>
          Lift the lock
        </Button>
      </div>
    </form>
  );
}

function PolicyForm({ stationId }: { stationId: string }) {
  const policy = useStationPolicy(stationId);
  const refs = useReferenceUnits();
  const save = useSetPolicy();
  const [draft, setDraft] = useState<{ shift: boolean; hours: string; units: string; refs: string[] } | null>(
    null,
  );
  if (policy.isPending || refs.isPending) return <Loading />;
  const p = policy.data;
  const d = draft ?? {
    shift: p?.atShiftStart ?? true,
    hours: p?.everyHours == null ? '' : String(p.everyHours),
    units: p?.everyUnits == null ? '' : String(p.everyUnits),
    refs: p?.referenceUnitIds ?? [],
  };
  const submit = (e: FormEvent) => {
    e.preventDefault();
    save.mutate({
      stationId,
      policy: {
        atShiftStart: d.shift,
        everyHours: d.hours.trim() === '' ? null : Number(d.hours),
        everyUnits: d.units.trim() === '' ? null : Number(d.units),
        referenceUnitIds: d.refs,
      },
    });
  };
  return (
    <form onSubmit={submit} className="flex flex-col gap-3" aria-labelledby="policy-title">
      <h3 id="policy-title" className="text-lg font-semibold text-graphite-100">
        When this station must be qualified
      </h3>
      {p === null ? <p className="text-graphite-300">No policy yet: the station is never locked.</p> : null}
      <CheckboxField
        label="At every plant shift start"
        checked={d.shift}
        onChange={(e) => setDraft({ ...d, shift: e.target.checked })}
      />
      <div className="grid gap-3 sm:grid-cols-2">
        <TextField
          label="Every … hours (empty: no time limit)"
          type="number"
          min="0.5"
          step="0.5"
          value={d.hours}
          onChange={(e) => setDraft({ ...d, hours: e.target.value })}
        />
        <TextField
          label="Every … production units (empty: no count)"
          type="number"
          min="1"
          value={d.units}
          onChange={(e) => setDraft({ ...d, units: e.target.value })}
        />
      </div>
      <fieldset className="flex flex-col gap-1">
        <legend className="mb-1 font-semibold text-graphite-100">
          Reference units that qualify it (any one will do)
        </legend>
        <div className="flex flex-wrap gap-4">
          {(refs.data ?? []).map((r) => (
            <CheckboxField
              key={r.id}
              label={`${r.serial} (${r.modelCode})`}
              checked={d.refs.includes(r.id)}
              onChange={(e) =>
                setDraft({
                  ...d,
                  refs: e.target.checked ? [...d.refs, r.id] : d.refs.filter((x) => x !== r.id),
                })
              }
            />
          ))}
        </div>
      </fieldset>
      {save.error ? <Alert tone="fault">{save.error.message}</Alert> : null}
      {save.isSuccess && !draft ? <Alert tone="ok">Policy saved.</Alert> : null}
      <div>
        <Button type="submit" variant="primary" busy={save.isPending} onClick={() => setDraft(null)}>
          Save the policy
        </Button>
      </div>
    </form>
  );
}

/** The reference-unit form's fields as typed; numbers are text until the resolver reads them. */
type ReferenceUnitForm = { serial: string; certifiedOffsetDeg: string; toleranceDeg: string };
const REFERENCE_UNIT_FIELDS = ['serial', 'certifiedOffsetDeg', 'toleranceDeg'] as const;
const checkReferenceUnit = zodResolver(createReferenceUnitSchema);
/** Typed text becomes the numbers the shared schema reads (an empty offset: certify from readings later). */
const referenceUnitResolver: Resolver<ReferenceUnitForm, unknown, CreateReferenceUnit> = (
  values,
  context,
  options,
) =>
  checkReferenceUnit(
    {
      serial: values.serial,
      certifiedOffsetDeg:
        values.certifiedOffsetDeg.trim() === '' ? undefined : Number(values.certifiedOffsetDeg),
      toleranceDeg: values.toleranceDeg.trim() === '' ? Number.NaN : Number(values.toleranceDeg),
    },
    context,
    options as never,
  ) as ReturnType<Resolver<ReferenceUnitForm, unknown, CreateReferenceUnit>>;

function ReferenceUnits({ canEdit, stations }: { canEdit: boolean; stations: StationChoice[] }) {
  const refs = useReferenceUnits();
  const [certifying, setCertifying] = useState<string | null>(null);
  const [certified, setCertifiedNote] = useState<string | null>(null);
  const tz = useShiftsTimeZone();
  const create = useCreateReferenceUnit();
  const [banner, setBanner] = useState<string | null>(null);
  const form = useForm<ReferenceUnitForm, unknown, CreateReferenceUnit>({
    resolver: referenceUnitResolver,
    defaultValues: { serial: '', certifiedOffsetDeg: '', toleranceDeg: '0.3' },
  });
  const { errors } = form.formState;
  const submit = form.handleSubmit(async (values) => {
    setBanner(null);
    try {
      await create.mutateAsync(values);
      form.reset();
    } catch (e) {
      setBanner(applyServerErrors(e, form.setError, REFERENCE_UNIT_FIELDS));
    }
  });
  return (
    <Panel title="Reference units" titleId="refs-title">
      {refs.isPending ? <Loading /> : null}
      {refs.data ? (
        <TableFrame caption="Reference units">
          <thead>
            <tr>
              <Th>Serial</Th>
              <Th>Model</Th>
              <Th>Certified offset</Th>
              <Th>Tolerance</Th>
              <Th>Certified from</Th>
              {canEdit ? <Th>Certify</Th> : null}
            </tr>
          </thead>
          <tbody>
            {refs.data.map((r) => (
              <tr key={r.id}>
                <Td className="font-semibold">{r.serial}</Td>
                <Td>{r.modelCode}</Td>
                <Td>
                  {r.certifiedOffsetDeg === null ? 'being certified' : `${r.certifiedOffsetDeg.toFixed(3)}°`}
                </Td>
                <Td>± {r.toleranceDeg.toFixed(2)}°</Td>
                <Td>
                  {r.certifiedFrom
                    ? `${r.certifiedFrom.n} readings${r.certifiedFrom.excluded?.length ? ` (${r.certifiedFrom.excluded.length} left out)` : ''}, U = ± ${r.certifiedFrom.expandedUncertaintyDeg.toFixed(3)}° (k = 2)`
                    : r.certifiedOffsetDeg === null
                      ? 'not yet'
                      : 'entered by an engineer'}
                </Td>
                {canEdit ? (
                  <Td>
                    <Button
                      variant="quiet"
                      aria-pressed={certifying === r.id}
                      onClick={() => {
                        setCertifiedNote(null);
                        setCertifying(certifying === r.id ? null : r.id);
                      }}
                    >
                      From readings…
                    </Button>
                  </Td>
                ) : null}
              </tr>
            ))}
          </tbody>
        </TableFrame>
      ) : null}
      {certified ? <Alert tone="ok">{certified}</Alert> : null}
      {canEdit && certifying && refs.data?.find((r) => r.id === certifying) ? (
        <CertifyPanel
          key={certifying}
          reference={refs.data.find((r) => r.id === certifying)!}
          stations={stations}
          timeZone={tz}
          onDone={(saved) => {
            setCertifying(null);
            setCertifiedNote(
              saved?.certifiedFrom
                ? `${saved.serial} certified at ${saved.certifiedOffsetDeg?.toFixed(3)}° ± ${saved.certifiedFrom.expandedUncertaintyDeg.toFixed(3)}° from ${saved.certifiedFrom.n} readings (audited).`
                : null,
            );
          }}
        />
      ) : null}
      {canEdit ? (
        <form
          onSubmit={submit}
          noValidate
          className="mt-4 grid gap-3 sm:grid-cols-4 sm:items-start"
          aria-label="Add a reference unit"
        >
          <TextField
            label="Serial of a registered unit"
            required
            error={errors.serial?.message}
            {...form.register('serial')}
          />
          <TextField
            label="Certified offset (°, empty: certify from readings)"
            type="number"
            step="0.001"
            error={errors.certifiedOffsetDeg?.message}
            {...form.register('certifiedOffsetDeg')}
          />
          <TextField
            label="Tolerance (± °)"
            type="number"
            step="0.01"
            min="0.01"
            required
            error={errors.toleranceDeg?.message}
            {...form.register('toleranceDeg')}
          />
          <div className="sm:pt-7">
            <Button type="submit" variant="primary" busy={create.isPending}>
              Add reference unit
            </Button>
          </div>
          {banner ? (
            <div className="sm:col-span-4">
              <Alert tone="fault">{banner}</Alert>
            </div>
          ) : null}
        </form>
      ) : null}
    </Panel>
  );
}

function StationPart({ stationId, canEdit }: { stationId: string; canEdit: boolean }) {
  const state = useStationQualification(stationId);
  const readings = useStationReadings(stationId);
  const tz = state.data?.timeZone ?? 'UTC';
  return (
    <div className="flex flex-col gap-4">
      {state.data?.kind === 'not_required' ? (
        <Alert>This station has no qualification policy: it is never locked.</Alert>
      ) : null}
      <QualificationBanner stationId={stationId} />
      <Panel title="Bias of this station" titleId="bias-title">
        {readings.isPending ? <Loading /> : null}
        {readings.data ? <BiasChart readings={readings.data} timeZone={tz} /> : null}
      </Panel>
      {readings.data?.length ? (
        <Panel title="Reference readings" titleId="readings-title">
          <TableFrame caption="Reference readings, newest first">
            <thead>
              <tr>
                <Th>When</Th>
                <Th>Reference unit</Th>
                <Th>Reading</Th>
                <Th>Certified</Th>
                <Th>Deviation</Th>
                <Th>Result</Th>
                <Th>Slip</Th>
              </tr>
            </thead>
            <tbody>
              {[...readings.data]
                .reverse()
                .slice(0, 20)
                .map((r) => (
                  <tr key={r.id}>
                    <Td>{new Date(r.measuredAt).toLocaleString('en-GB', { timeZone: tz })}</Td>
                    <Td>{r.serial}</Td>
                    <Td>{r.offsetDeg.toFixed(3)}°</Td>
                    <Td>{r.certifiedOffsetDeg === null ? '—' : `${r.certifiedOffsetDeg.toFixed(3)}°`}</Td>
                    <Td>
                      {r.deviationDeg === null
                        ? '—'
                        : `${formatSignedDeg(r.deviationDeg, 3)} (± ${r.toleranceDeg.toFixed(2)}°)`}
                    </Td>
                    <Td className="font-semibold">
                      {r.verdict === 'pass'
                        ? 'Passed'
                        : r.verdict === 'fail'
                          ? 'Failed'
                          : 'Recorded (certifying)'}
                    </Td>
                    <Td>
                      <a
                        href={`/api/qualification/readings/${encodeURIComponent(r.id)}/slip.pdf`}
                        target="_blank"
                        rel="noreferrer"
                        className="inline-flex min-h-target items-center font-semibold"
                        aria-label={`PDF slip of ${r.serial}, ${new Date(r.measuredAt).toLocaleString('en-GB', { timeZone: tz })}`}
                      >
                        PDF slip
                      </a>
                    </Td>
                  </tr>
                ))}
            </tbody>
          </TableFrame>
        </Panel>
      ) : null}
      {canEdit && state.data && state.data.kind !== 'not_required' ? (
        <Panel>
          <LiftLockForm stationId={stationId} />
        </Panel>
      ) : null}
      {canEdit ? (
        <Panel>
          <PolicyForm stationId={stationId} />
        </Panel>
      ) : null}
    </div>
  );
}

/**
 * Station qualification for engineers and quality: each station's state and bias against its reference
 * units, the reference units themselves, and lifting a lock for a while with a reason.
 */
export function QualificationWorkspace({
  stations,
  canEdit,
}: {
  stations: StationChoice[];
  canEdit: boolean;
}) {
  const [stationId, setStationId] = useState<string | null>(stations[0]?.id ?? null);
  return (
    <div className="flex flex-col gap-5">
      {stations.length ? (
        <div className="max-w-sm">
          <SelectField
            label="Station"
            value={stationId ?? ''}
            onChange={(e) => setStationId(e.target.value)}
            options={stations.map((s) => ({ value: s.id, label: s.name }))}
          />
        </div>
      ) : (
        <Alert>No stations yet.</Alert>
      )}
      {stationId ? <StationPart key={stationId} stationId={stationId} canEdit={canEdit} /> : null}
      <ReferenceUnits canEdit={canEdit} stations={stations} />
    </div>
  );
}
