import { useState } from 'react';
import { useForm, type FieldErrors, type Resolver } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { certifiedValue } from '#shared/statistics/gauge-study';
import {
  certifyReferenceUnitSchema,
  type CertifyReferenceUnit,
  type ReferenceUnitView,
} from '#shared/schemas/qualification';
import { formatSignedDeg } from '#shared/wording';
import { Alert } from '#src/components/ui/alert';
import { QueryState } from '#src/components/ui/query-state';
import { Button } from '#src/components/ui/button';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { SelectField, TextField } from '#src/components/ui/field';
import { applyServerErrors } from '#src/lib/form-errors';
import { useCertifyReference, useReferenceReadings } from '../api/qualification';

type Choice = 'use' | 'leave-out' | 'skip';
/** What is typed: a reason per reading left out (by reading id). The choices are selects held beside. */
type CertifyFields = { reasons: Record<string, string> };
const checkCertify = zodResolver(certifyReferenceUnitSchema);

/**
 * Builds the request from the chosen readings and the typed reasons and checks it with the shared schema;
 * its refusals come back onto the reason of the reading they name, or as the form's own (`root.readings`).
 */
function certifyResolver(
  stationId: string,
  used: { id: string }[],
  leftOut: { id: string }[],
): Resolver<CertifyFields> {
  return async (values, context, options) => {
    const input: CertifyReferenceUnit = {
      stationId,
      readingIds: used.map((r) => r.id),
      excluded: leftOut.map((r) => ({ readingId: r.id, reason: values.reasons[r.id] ?? '' })),
    };
    const checked = await checkCertify(input, context, {
      ...options,
      fields: {},
      names: [],
    } as unknown as Parameters<typeof checkCertify>[2]);
    if (!Object.keys(checked.errors).length) return { values, errors: {} };
    const found = checked.errors as FieldErrors<{ readingIds: string[]; excluded: { reason: string }[] }>;
    const reasons: Record<string, { type: string; message?: string }> = {};
    leftOut.forEach((r, i) => {
      const e = found.excluded?.[i]?.reason;
      if (e) reasons[r.id] = { type: e.type, message: e.message };
    });
    const general = found.readingIds?.message ?? found.excluded?.message ?? found.root?.message;
    return {
      values: {},
      errors: {
        ...(Object.keys(reasons).length ? { reasons } : {}),
        ...(general ? { root: { readings: { type: 'schema', message: general } } } : {}),
      } as FieldErrors<CertifyFields>,
    };
  };
}
const CHOICES = [
  { value: 'use', label: 'Use' },
  { value: 'leave-out', label: 'Leave out (say why)' },
  { value: 'skip', label: 'Not part of this' },
] as const;

/**
 * Certifying a reference unit from its readings at one station: the engineer picks the readings, names a
 * reason for each one left out, and sees the mean and expanded uncertainty of the chosen set before saving.
 */
export function CertifyPanel({
  reference,
  stations,
  timeZone,
  onDone,
}: {
  reference: ReferenceUnitView;
  stations: { id: string; name: string }[];
  timeZone: string;
  /** Called with the reference unit as certified, or with nothing when cancelled. */
  onDone: (saved?: ReferenceUnitView) => void;
}) {
  const [stationId, setStationId] = useState(reference.certifiedFrom?.stationId ?? stations[0]?.id ?? '');
  const readings = useReferenceReadings(reference.id, stationId || null);
  const certify = useCertifyReference();
  const [choice, setChoice] = useState<Record<string, Choice>>({});
  const [banner, setBanner] = useState<string | null>(null);
  // Readings taken while certifying (no certified value yet) are proposed; judged ones are not, until chosen.
  const choiceOf = (r: { id: string; verdict: string }): Choice =>
    choice[r.id] ?? (r.verdict === 'recorded' ? 'use' : 'skip');
  const rows = readings.data ?? [];
  const used = rows.filter((r) => choiceOf(r) === 'use');
  const leftOut = rows.filter((r) => choiceOf(r) === 'leave-out');
  const figures = used.length >= 2 ? certifiedValue(used.map((r) => r.offsetDeg)) : null;
  const when = (iso: string) => new Date(iso).toLocaleString('en-GB', { timeZone });
  const form = useForm<CertifyFields>({
    resolver: certifyResolver(stationId, used, leftOut),
    defaultValues: { reasons: {} },
  });
  const errors = form.formState.errors;
  const reasonErrors = Object.values(errors.reasons ?? {}).filter(Boolean).length;
  const submit = form.handleSubmit(async ({ reasons }) => {
    setBanner(null);
    try {
      const saved = await certify.mutateAsync({
        refId: reference.id,
        input: {
          stationId,
          readingIds: used.map((r) => r.id),
          excluded: leftOut.map((r) => ({ readingId: r.id, reason: (reasons[r.id] ?? '').trim() })),
        },
      });
      onDone(saved.referenceUnit);
    } catch (e) {
      setBanner(applyServerErrors(e, form.setError, []));
    }
  });
  return (
    <form
      onSubmit={submit}
      noValidate
      className="mt-4 flex flex-col gap-3 border-l-4 border-copper-400 bg-graphite-850 p-4"
      aria-labelledby="certify-title"
      data-testid="certify-panel"
    >
      <h3 id="certify-title" className="text-lg font-semibold text-graphite-100">
        Certify {reference.serial} from its readings
      </h3>
      <p className="text-graphite-300">
        Choose the readings to average. A reading you leave out needs a reason; both are kept in the audit
        log. The certified value is the mean; its expanded uncertainty is 2·s/√n (k = 2, about 95 %).
      </p>
      <div className="max-w-sm">
        <SelectField
          label="Station the readings were taken on"
          value={stationId}
          onChange={(e) => {
            setStationId(e.target.value);
            setChoice({});
            form.reset({ reasons: {} });
          }}
          options={stations.map((s) => ({ value: s.id, label: s.name }))}
        />
      </div>
      <QueryState
        query={readings}
        pending="Reading the readings…"
        failed="The readings could not be read"
        isEmpty={(data) => data.length === 0}
        empty={<Alert>No readings of {reference.serial} at this station yet: measure it there first.</Alert>}
      >
        {() => (
          <TableFrame caption={`Readings of ${reference.serial} at this station, newest first`}>
            <thead>
              <tr>
                <Th>When</Th>
                <Th>Reading</Th>
                <Th>Judged then</Th>
                <Th>Use it?</Th>
                <Th>Reason for leaving it out</Th>
              </tr>
            </thead>
            <tbody>
              {rows.map((r) => {
                const c = choiceOf(r);
                return (
                  <tr key={r.id}>
                    <Td>{when(r.measuredAt)}</Td>
                    <Td className="font-mono">{r.offsetDeg.toFixed(3)}°</Td>
                    <Td>
                      {r.verdict === 'recorded'
                        ? 'Taken while certifying'
                        : `${r.verdict === 'pass' ? 'Passed' : 'Failed'} (${formatSignedDeg(r.deviationDeg ?? 0, 3)})`}
                    </Td>
                    <Td>
                      <SelectField
                        label={`Use the reading of ${when(r.measuredAt)}`}
                        value={c}
                        onChange={(e) => setChoice({ ...choice, [r.id]: e.target.value as Choice })}
                        options={CHOICES}
                      />
                    </Td>
                    <Td>
                      {c === 'leave-out' ? (
                        <TextField
                          label={`Why leave out ${when(r.measuredAt)}`}
                          required
                          error={errors.reasons?.[r.id]?.message}
                          {...form.register(`reasons.${r.id}`)}
                        />
                      ) : null}
                    </Td>
                  </tr>
                );
              })}
            </tbody>
          </TableFrame>
        )}
      </QueryState>
      <div data-testid="certify-figures" className="text-lg text-graphite-50" aria-live="polite">
        {figures ? (
          <>
            {figures.n} readings chosen: certified value {figures.mean.toFixed(3)}°, expanded uncertainty ±{' '}
            {figures.expandedUncertainty.toFixed(3)}° (s = {figures.sd.toFixed(3)}°)
            {leftOut.length ? `; ${leftOut.length} left out` : ''}.
          </>
        ) : (
          'Choose at least 2 readings.'
        )}
      </div>
      {errors.root?.readings ? <Alert tone="fault">{errors.root.readings.message}</Alert> : null}
      {reasonErrors ? (
        <Alert tone="fault">Give a reason for each reading left out ({reasonErrors} without one).</Alert>
      ) : null}
      {banner ? <Alert tone="fault">{banner}</Alert> : null}
      <div className="flex flex-wrap gap-3">
        <Button type="submit" variant="primary" busy={certify.isPending}>
          Certify with these readings
        </Button>
        <Button variant="quiet" onClick={() => onDone()}>
          Cancel
        </Button>
      </div>
    </form>
  );
}
