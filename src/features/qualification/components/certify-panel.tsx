import { useState, type FormEvent } from 'react';
import { certifiedValue } from '#shared/statistics/gauge-study';
import type { ReferenceUnitView } from '#shared/schemas/qualification';
import { formatSignedDeg } from '#shared/wording';
import { Alert, Loading } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { SelectField, TextField } from '#src/components/ui/field';
import { useCertifyReference, useReferenceReadings } from '../api/qualification';

type Choice = 'use' | 'leave-out' | 'skip';
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
  const [reasons, setReasons] = useState<Record<string, string>>({});
  const [tried, setTried] = useState(false);
  // Readings taken while certifying (no certified value yet) are proposed; judged ones are not, until chosen.
  const choiceOf = (r: { id: string; verdict: string }): Choice =>
    choice[r.id] ?? (r.verdict === 'recorded' ? 'use' : 'skip');
  const rows = readings.data ?? [];
  const used = rows.filter((r) => choiceOf(r) === 'use');
  const leftOut = rows.filter((r) => choiceOf(r) === 'leave-out');
  const figures = used.length >= 2 ? certifiedValue(used.map((r) => r.offsetDeg)) : null;
  const missingReasons = leftOut.filter((r) => (reasons[r.id] ?? '').trim().length < 5);
  const when = (iso: string) => new Date(iso).toLocaleString('en-GB', { timeZone });
  const submit = (e: FormEvent) => {
    e.preventDefault();
    setTried(true);
    if (!figures || missingReasons.length) return;
    certify.mutate(
      {
        refId: reference.id,
        input: {
          stationId,
          readingIds: used.map((r) => r.id),
          excluded: leftOut.map((r) => ({ readingId: r.id, reason: reasons[r.id].trim() })),
        },
      },
      { onSuccess: (b) => onDone(b.referenceUnit) },
    );
  };
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
            setReasons({});
          }}
          options={stations.map((s) => ({ value: s.id, label: s.name }))}
        />
      </div>
      {readings.isPending ? <Loading label="Reading the readings…" /> : null}
      {readings.data && !rows.length ? (
        <Alert>No readings of {reference.serial} at this station yet: measure it there first.</Alert>
      ) : null}
      {rows.length ? (
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
              const missing = tried && c === 'leave-out' && (reasons[r.id] ?? '').trim().length < 5;
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
                        value={reasons[r.id] ?? ''}
                        onChange={(e) => setReasons({ ...reasons, [r.id]: e.target.value })}
                        error={missing ? 'Say why (at least 5 characters).' : undefined}
                        required
                      />
                    ) : null}
                  </Td>
                </tr>
              );
            })}
          </tbody>
        </TableFrame>
      ) : null}
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
      {tried && !figures ? <Alert tone="fault">Choose at least 2 readings to certify from.</Alert> : null}
      {tried && missingReasons.length ? (
        <Alert tone="fault">
          Give a reason for each reading left out ({missingReasons.length} without one).
        </Alert>
      ) : null}
      {certify.error ? <Alert tone="fault">{certify.error.message}</Alert> : null}
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
