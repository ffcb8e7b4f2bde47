// Over 350 lines on purpose for now: four small panels of one station (lock, policy, reference units,
// readings); each moves to its own file once the qualification work in flight has merged.
import { formatSignedDeg } from '#shared/wording';
import { useState } from 'react';
import type { z } from 'zod';
import { useForm, useWatch, type Resolver } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import {
  createReferenceUnitSchema,
  overrideSchema,
  qualificationPolicySchema,
  type CreateReferenceUnit,
  type QualificationPolicy,
  type ReferenceUnitView,
} from '#shared/schemas/qualification';
import { QueryState } from '#src/components/ui/query-state';
import { Alert } from '#src/components/ui/alert';
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

/** The lift form's fields as typed; the minutes are text until the resolver reads them. */
type LiftFormValues = { reason: string; minutes: string };
type LiftLock = z.infer<typeof overrideSchema>;
const LIFT_FIELDS = ['reason', 'minutes'] as const;
const checkLift = zodResolver(overrideSchema);
const liftResolver: Resolver<LiftFormValues, unknown, LiftLock> = (values, context, options) =>
  checkLift(
    { reason: values.reason, minutes: values.minutes.trim() === '' ? Number.NaN : Number(values.minutes) },
    context,
    options as never,
  ) as ReturnType<Resolver<LiftFormValues, unknown, LiftLock>>;

function LiftLockForm({ stationId }: { stationId: string }) {
  const lift = useLiftLock();
  const [banner, setBanner] = useState<string | null>(null);
  const form = useForm<LiftFormValues, unknown, LiftLock>({
    resolver: liftResolver,
    defaultValues: { reason: '', minutes: '60' },
  });
  const { errors } = form.formState;
  const submit = form.handleSubmit(async (values) => {
    setBanner(null);
    try {
      await lift.mutateAsync({ stationId, ...values });
    } catch (e) {
      setBanner(applyServerErrors(e, form.setError, LIFT_FIELDS));
    }
  });
  return (
    <form onSubmit={submit} noValidate className="flex flex-col gap-3" aria-labelledby="lift-title">
      <h3 id="lift-title" className="text-lg font-semibold text-graphite-100">
        Lift the lock for a while
      </h3>
      <p className="text-graphite-300">
        Production is accepted until the time runs out; the reason is kept in the audit log. Measure a
        reference unit as soon as you can.
      </p>
      <TextField label="Reason" required error={errors.reason?.message} {...form.register('reason')} />
      <TextField
        label="For how long (minutes, 5 to 480)"
        type="number"
        inputMode="numeric"
        required
        error={errors.minutes?.message}
        {...form.register('minutes')}
      />
      {banner ? <Alert tone="fault">{banner}</Alert> : null}
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

/** The policy form's fields as typed; hours and units are text until the resolver reads them. */
type PolicyFormValues = {
  atShiftStart: boolean;
  everyHours: string;
  everyUnits: string;
  referenceUnitIds: string[];
};
const POLICY_FIELDS = ['atShiftStart', 'everyHours', 'everyUnits', 'referenceUnitIds'] as const;
const checkPolicy = zodResolver(qualificationPolicySchema);
/** An empty count means "no such limit" (null), as the shared schema reads it. */
const optionalNumber = (text: string) => (text.trim() === '' ? null : Number(text));
const policyResolver: Resolver<PolicyFormValues, unknown, QualificationPolicy> = (values, context, options) =>
  checkPolicy(
    {
      ...values,
      everyHours: optionalNumber(values.everyHours),
      everyUnits: optionalNumber(values.everyUnits),
    },
    context,
    options as never,
  ) as ReturnType<Resolver<PolicyFormValues, unknown, QualificationPolicy>>;

function PolicyForm({ stationId }: { stationId: string }) {
  const policy = useStationPolicy(stationId);
  const refs = useReferenceUnits();
  return (
    <QueryState query={policy} pending="Reading the policy…" failed="The policy could not be read">
      {(p) => (
        <QueryState
          query={refs}
          pending="Reading the reference units…"
          failed="The reference units could not be read"
        >
          {(units) => (
            <PolicyFields
              key={`${stationId}-${JSON.stringify(p)}`}
              stationId={stationId}
              policy={p}
              units={units}
            />
          )}
        </QueryState>
      )}
    </QueryState>
  );
}

function PolicyFields({
  stationId,
  policy: p,
  units,
}: {
  stationId: string;
  policy: QualificationPolicy | null;
  units: ReferenceUnitView[];
}) {
  const save = useSetPolicy();
  const [banner, setBanner] = useState<string | null>(null);
  const form = useForm<PolicyFormValues, unknown, QualificationPolicy>({
    resolver: policyResolver,
    defaultValues: {
      atShiftStart: p?.atShiftStart ?? true,
      everyHours: p?.everyHours == null ? '' : String(p.everyHours),
      everyUnits: p?.everyUnits == null ? '' : String(p.everyUnits),
      referenceUnitIds: p?.referenceUnitIds ?? [],
    },
  });
  const { errors } = form.formState;
  const chosen = useWatch({ control: form.control, name: 'referenceUnitIds' });
  const submit = form.handleSubmit(async (policy) => {
    setBanner(null);
    try {
      await save.mutateAsync({ stationId, policy });
      form.reset(form.getValues());
    } catch (e) {
      setBanner(applyServerErrors(e, form.setError, POLICY_FIELDS));
    }
  });
  return (
    <form onSubmit={submit} noValidate className="flex flex-col gap-3" aria-labelledby="policy-title">
      <h3 id="policy-title" className="text-lg font-semibold text-graphite-100">
        When this station must be qualified
      </h3>
      {p === null ? <p className="text-graphite-300">No policy yet: the station is never locked.</p> : null}
      <CheckboxField label="At every plant shift start" {...form.register('atShiftStart')} />
      {errors.atShiftStart ? (
        <p role="alert" className="text-sm font-medium text-fault">
          {errors.atShiftStart.message}
        </p>
      ) : null}
      <div className="grid gap-3 sm:grid-cols-2">
        <TextField
          label="Every … hours (empty: no time limit)"
          type="number"
          min="0.5"
          step="0.5"
          error={errors.everyHours?.message}
          {...form.register('everyHours')}
        />
        <TextField
          label="Every … production units (empty: no count)"
          type="number"
          min="1"
          error={errors.everyUnits?.message}
          {...form.register('everyUnits')}
        />
      </div>
      <fieldset
        className="flex flex-col gap-1"
        aria-invalid={errors.referenceUnitIds ? true : undefined}
        aria-describedby={errors.referenceUnitIds ? `${stationId}-refs-error` : undefined}
      >
        <legend className="mb-1 font-semibold text-graphite-100">
          Reference units that qualify it (any one will do)
        </legend>
        <div className="flex flex-wrap gap-4">
          {units.map((r) => (
            <CheckboxField
              key={r.id}
              label={`${r.serial} (${r.modelCode})`}
              checked={chosen.includes(r.id)}
              onChange={(e) =>
                form.setValue(
                  'referenceUnitIds',
                  e.target.checked ? [...chosen, r.id] : chosen.filter((x) => x !== r.id),
                  { shouldDirty: true, shouldValidate: form.formState.isSubmitted },
                )
              }
            />
          ))}
        </div>
        {errors.referenceUnitIds ? (
          <p id={`${stationId}-refs-error`} role="alert" className="text-sm font-medium text-fault">
            {errors.referenceUnitIds.message}
          </p>
        ) : null}
      </fieldset>
      {banner ? <Alert tone="fault">{banner}</Alert> : null}
      {save.isSuccess && !form.formState.isDirty ? <Alert tone="ok">Policy saved.</Alert> : null}
      <div>
        <Button type="submit" variant="primary" busy={save.isPending}>
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
      <QueryState
        query={refs}
        pending="Reading the reference units…"
        failed="The reference units could not be read"
      >
        {(units) => (
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
              {units.map((r) => (
                <tr key={r.id}>
                  <Td className="font-semibold">{r.serial}</Td>
                  <Td>{r.modelCode}</Td>
                  <Td>
                    {r.certifiedOffsetDeg === null
                      ? 'being certified'
                      : `${r.certifiedOffsetDeg.toFixed(3)}°`}
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
        )}
      </QueryState>
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
        <QueryState
          query={readings}
          pending="Reading the reference readings…"
          failed="The readings could not be read"
        >
          {(data) => <BiasChart readings={data} timeZone={tz} />}
        </QueryState>
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
