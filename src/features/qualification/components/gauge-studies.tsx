import { useState } from 'react';
import { useForm, useWatch, type Resolver } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { GaugeFigures } from '#shared/statistics/gauge-study';
import {
  gaugeStudyCreateSchema,
  type GaugeStudyCreate,
  type GaugeStudyDetail,
} from '#shared/schemas/qualification';
import { Alert, Loading } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { CheckboxField, SelectField, TextAreaField, TextField } from '#src/components/ui/field';
import { Panel } from '#src/components/ui/panel';
import { QueryState } from '#src/components/ui/query-state';
import { StatusChip } from '#src/components/ui/status-chip';
import { applyServerErrors } from '#src/lib/form-errors';
import {
  useCreateStudy,
  useModelChoices,
  useOperatorChoices,
  useStudies,
  useStudy,
} from '../api/qualification';
import { StudyCharts } from './study-charts';

type StationChoice = { id: string; name: string };
const pct = (v: number | undefined) => (v === undefined ? '—' : `${v.toFixed(1)} %`);
const deg = (v: number) => `${v.toFixed(4)}°`;

function FiguresTable({ caption, g }: { caption: string; g: GaugeFigures }) {
  const rows: [string, number, number | undefined, number | undefined][] = [
    ['Repeatability (EV)', g.ev, g.percentOfTv.ev, g.percentOfTolerance?.ev],
    ['Reproducibility (AV)', g.av, g.percentOfTv.av, g.percentOfTolerance?.av],
    ['Appraiser × part interaction', g.interaction, g.percentOfTv.interaction, undefined],
    ['Gauge R&R (GRR)', g.grr, g.percentOfTv.grr, g.percentOfTolerance?.grr],
    ['Part variation (PV)', g.pv, g.percentOfTv.pv, g.percentOfTolerance?.pv],
    ['Total variation (TV)', g.tv, 100, undefined],
  ];
  return (
    <TableFrame caption={caption}>
      <thead>
        <tr>
          <Th>Source</Th>
          <Th>Standard deviation</Th>
          <Th>% of total variation</Th>
          <Th>% of tolerance (6σ)</Th>
        </tr>
      </thead>
      <tbody>
        {rows.map(([name, sd, tv, tol]) => (
          <tr key={name}>
            <Td className={name.startsWith('Gauge') ? 'font-semibold' : ''}>{name}</Td>
            <Td>{deg(sd)}</Td>
            <Td>{pct(tv)}</Td>
            <Td>{pct(tol)}</Td>
          </tr>
        ))}
        <tr>
          <Td>Number of distinct categories</Td>
          <Td>{Number.isFinite(g.ndc) ? g.ndc : 'many'}</Td>
          <Td />
          <Td />
        </tr>
      </tbody>
    </TableFrame>
  );
}

function StudyResults({ study }: { study: GaugeStudyDetail }) {
  const r = study.results!;
  const tone =
    r.reading.reading === 'acceptable' ? 'ok' : r.reading.reading === 'marginal' ? 'warn' : 'fault';
  const word =
    r.reading.reading === 'acceptable'
      ? 'Acceptable'
      : r.reading.reading === 'marginal'
        ? 'May be acceptable'
        : 'Not acceptable';
  return (
    <div className="flex flex-col gap-5">
      <div className="flex flex-col gap-2" data-testid="study-reading">
        <div>
          <StatusChip tone={tone}>{word}</StatusChip>
        </div>
        <p className="text-lg text-graphite-50">{r.reading.sentence}</p>
        {r.readingOfTolerance ? (
          <p className="text-graphite-200">
            Against the tolerance of {study.toleranceDeg}°: {r.readingOfTolerance.sentence}
          </p>
        ) : null}
        <p className="text-sm text-graphite-300">
          Reading: under 10 % acceptable, 10–30 % may be acceptable depending on the use, over 30 % not; at
          least 5 distinct categories (AIAG MSA manual, 4th edition, as commonly applied).
        </p>
      </div>
      <h3 className="text-lg font-semibold text-graphite-100">ANOVA method</h3>
      <FiguresTable caption="Results by the ANOVA method" g={r.anova} />
      <TableFrame caption="ANOVA table">
        <thead>
          <tr>
            <Th>Source</Th>
            <Th>Degrees of freedom</Th>
            <Th>Sum of squares (°²)</Th>
            <Th>Mean square (°²)</Th>
            <Th>F</Th>
            <Th>p</Th>
          </tr>
        </thead>
        <tbody>
          {r.anova.table.map((row) => (
            <tr key={row.source}>
              <Td>
                {row.source === 'repeatability'
                  ? r.anova.interactionPooled
                    ? 'Repeatability (interaction pooled)'
                    : 'Repeatability'
                  : row.source[0].toUpperCase() + row.source.slice(1)}
              </Td>
              <Td>{row.df}</Td>
              <Td>{row.ss.toFixed(5)}</Td>
              <Td>{row.ms === undefined ? '' : row.ms.toFixed(5)}</Td>
              <Td>{row.f === undefined ? '' : row.f.toFixed(2)}</Td>
              <Td>{row.p === undefined ? '' : row.p < 0.0001 ? '< 0.0001' : row.p.toFixed(4)}</Td>
            </tr>
          ))}
        </tbody>
      </TableFrame>
      <p className="text-graphite-300">
        The interaction was {r.anova.interactionPooled ? 'pooled into repeatability' : 'kept'} (p ={' '}
        {r.anova.interactionP.toFixed(3)}; it is pooled above 0.25).
      </p>
      <h3 className="text-lg font-semibold text-graphite-100">Average-and-range method</h3>
      <FiguresTable caption="Results by the average-and-range method" g={r.averageRange} />
      <p className="text-graphite-300">
        K1 = {r.averageRange.k1.toFixed(4)}, K2 = {r.averageRange.k2.toFixed(4)}, K3 ={' '}
        {r.averageRange.k3.toFixed(4)}; mean range {deg(r.averageRange.averageRange)}, appraiser means differ
        by {deg(r.averageRange.appraiserDiff)}.
      </p>
      <StudyCharts study={study} />
    </div>
  );
}

function StudyDetail({ id }: { id: string }) {
  const q = useStudy(id);
  return (
    <QueryState query={q} pending="Reading the study…" failed="The study could not be read">
      {(s) => <StudyView s={s} />}
    </QueryState>
  );
}

function StudyView({ s }: { s: GaugeStudyDetail }) {
  return (
    <Panel title={s.name} titleId="study-title">
      <p className="mb-4 text-graphite-200" data-testid="study-design">
        {s.modelCode} · {s.parts.length} parts · {s.appraisers.length}{' '}
        {s.appraiserKind === 'station' ? 'stations' : 'operators'} (
        {s.appraisers.map((a) => a.name).join(', ')}) · {s.trials} trials · tolerance {s.toleranceDeg}° ·{' '}
        {s.status === 'finished' ? `finished, ${s.done} readings` : `${s.done} of ${s.total} readings taken`}
        {s.readings.some((r) => r.repeatReason)
          ? ` · ${s.readings.filter((r) => r.repeatReason).length} spoiled trial(s) measured again`
          : ''}
      </p>
      <p className="mb-4">
        <a
          href={`/api/gauge-studies/${encodeURIComponent(s.id)}/report.pdf`}
          target="_blank"
          rel="noreferrer"
          className="inline-flex min-h-target items-center font-semibold"
        >
          Open the study report (PDF)
        </a>
      </p>
      {s.results ? (
        <StudyResults study={s} />
      ) : (
        <Alert>The results appear when every trial is measured.</Alert>
      )}
    </Panel>
  );
}

/** The design form's fields as typed: serials as one text, numbers as text, until the resolver reads them. */
type DesignFields = {
  name: string;
  modelId: string;
  appraiserKind: 'station' | 'operator';
  appraiserIds: string[];
  stationId: string;
  partSerials: string;
  trials: string;
  toleranceDeg: string;
};
const DESIGN_FIELDS = [
  'name',
  'modelId',
  'appraiserIds',
  'stationId',
  'partSerials',
  'trials',
  'toleranceDeg',
];
const checkDesign = zodResolver(gaugeStudyCreateSchema);

/** The request as the shared schema reads it; an unchosen model or station is the one the select shows. */
function designResolver(
  firstModel: string,
  firstStation: string,
): Resolver<DesignFields, unknown, GaugeStudyCreate> {
  return (values, context, options) =>
    checkDesign(
      {
        name: values.name,
        modelId: values.modelId || firstModel,
        appraiserKind: values.appraiserKind,
        appraiserIds: values.appraiserIds,
        ...(values.appraiserKind === 'operator' ? { stationId: values.stationId || firstStation } : {}),
        partSerials: values.partSerials.split(/[\s,]+/).filter(Boolean),
        trials: values.trials.trim() === '' ? Number.NaN : Number(values.trials),
        toleranceDeg: values.toleranceDeg.trim() === '' ? Number.NaN : Number(values.toleranceDeg),
      },
      context,
      options as never,
    ) as ReturnType<Resolver<DesignFields, unknown, GaugeStudyCreate>>;
}

/** The first message of a field whose schema is a list (one serial of several refused, or the list itself). */
function firstMessage(error: unknown): string | undefined {
  if (!error || typeof error !== 'object') return undefined;
  if ('message' in error && typeof error.message === 'string' && error.message) return error.message;
  if (Array.isArray(error))
    for (const item of error as unknown[]) if (firstMessage(item)) return firstMessage(item);
  return undefined;
}

function DesignForm({ stations, onCreated }: { stations: StationChoice[]; onCreated: (id: string) => void }) {
  const models = useModelChoices();
  const create = useCreateStudy();
  const [banner, setBanner] = useState<string | null>(null);
  const form = useForm<DesignFields, unknown, GaugeStudyCreate>({
    resolver: designResolver(models.data?.[0]?.id ?? '', stations[0]?.id ?? ''),
    defaultValues: {
      name: '',
      modelId: '',
      appraiserKind: 'station',
      appraiserIds: [],
      stationId: '',
      partSerials: '',
      trials: '3',
      toleranceDeg: '2',
    },
  });
  const { errors } = form.formState;
  const [kind, chosen, modelId, studyStation] = useWatch({
    control: form.control,
    name: ['appraiserKind', 'appraiserIds', 'modelId', 'stationId'],
  });
  const operators = useOperatorChoices(kind === 'operator');
  const choices: StationChoice[] = kind === 'station' ? stations : (operators.data ?? []);
  const appraisersError = firstMessage(errors.appraiserIds);
  const submit = form.handleSubmit(async (design) => {
    setBanner(null);
    try {
      onCreated((await create.mutateAsync(design)).id);
    } catch (e) {
      setBanner(applyServerErrors(e, form.setError, DESIGN_FIELDS));
    }
  });
  return (
    <form
      onSubmit={submit}
      noValidate
      className="grid gap-3 md:grid-cols-2"
      aria-label="Design a gauge study"
    >
      <TextField label="Name" required error={errors.name?.message} {...form.register('name')} />
      <SelectField
        label="Model"
        value={modelId || models.data?.[0]?.id || ''}
        error={errors.modelId?.message}
        onChange={(e) => form.setValue('modelId', e.target.value)}
        options={(models.data ?? []).map((m) => ({ value: m.id, label: m.code }))}
      />
      <SelectField
        label="Who are the appraisers?"
        hint="Stations: how much the rigs differ. Operators: how much the people using one rig differ."
        value={kind}
        onChange={(e) => {
          form.setValue('appraiserKind', e.target.value as 'station' | 'operator');
          form.setValue('appraiserIds', []);
        }}
        options={[
          { value: 'station', label: 'Stations (each measures every part)' },
          { value: 'operator', label: 'Operators on one station' },
        ]}
      />
      {kind === 'operator' ? (
        <SelectField
          label="Station where the operators measure"
          hint="Each operator signs in at this station in turn; its screen shows whose trials are next."
          value={studyStation || stations[0]?.id || ''}
          error={errors.stationId?.message}
          onChange={(e) => form.setValue('stationId', e.target.value)}
          options={stations.map((s) => ({ value: s.id, label: s.name }))}
        />
      ) : (
        <div />
      )}
      <fieldset
        className="flex flex-col gap-1 md:col-span-2"
        aria-invalid={appraisersError ? true : undefined}
        aria-describedby={appraisersError ? 'design-appraisers-error' : undefined}
      >
        <legend className="mb-1 font-semibold text-graphite-100">
          Appraisers ({kind === 'station' ? 'stations' : 'operators'}; 3 is usual)
        </legend>
        {kind === 'operator' && operators.isPending ? <Loading label="Fetching operators…" /> : null}
        {kind === 'operator' && operators.data?.length === 0 ? (
          <p className="text-graphite-300">No operator accounts yet.</p>
        ) : null}
        <div className="flex flex-wrap gap-4">
          {choices.map((s) => (
            <CheckboxField
              key={s.id}
              label={s.name}
              checked={chosen.includes(s.id)}
              onChange={(e) =>
                form.setValue(
                  'appraiserIds',
                  e.target.checked ? [...chosen, s.id] : chosen.filter((c) => c !== s.id),
                  { shouldValidate: form.formState.isSubmitted },
                )
              }
            />
          ))}
        </div>
        {appraisersError ? (
          <p id="design-appraisers-error" role="alert" className="text-sm font-medium text-fault">
            {appraisersError}
          </p>
        ) : null}
      </fieldset>
      <div className="md:col-span-2">
        <TextAreaField
          label="Part serials (10 is usual; spread over the process), separated by spaces or new lines"
          rows={3}
          required
          error={firstMessage(errors.partSerials)}
          {...form.register('partSerials')}
        />
      </div>
      <TextField
        label="Trials per part and appraiser"
        type="number"
        min={2}
        max={10}
        error={errors.trials?.message}
        {...form.register('trials')}
      />
      <TextField
        label="Tolerance, upper minus lower limit (°)"
        type="number"
        step="0.01"
        min="0.01"
        error={errors.toleranceDeg?.message}
        {...form.register('toleranceDeg')}
      />
      {banner ? (
        <div className="md:col-span-2">
          <Alert tone="fault">{banner}</Alert>
        </div>
      ) : null}
      <div>
        <Button type="submit" variant="primary" busy={create.isPending}>
          Plan the study
        </Button>
      </div>
    </form>
  );
}

/** Gauge R&R studies: the list, a study's results and charts, and (for engineers) designing a new one. */
export function GaugeStudies({ stations, canEdit }: { stations: StationChoice[]; canEdit: boolean }) {
  const list = useStudies();
  const [selected, setSelected] = useState<string | null>(null);
  const current = selected ?? list.data?.[0]?.id ?? null;
  return (
    <div className="flex flex-col gap-5">
      <Panel title="Studies" titleId="studies-title">
        <QueryState
          query={list}
          pending="Reading the studies…"
          failed="The studies could not be read"
          isEmpty={(studies) => studies.length === 0}
          empty={<p className="text-graphite-300">No studies yet.</p>}
        >
          {(studies) => (
            <TableFrame caption="Gauge studies, newest first">
              <thead>
                <tr>
                  <Th>Study</Th>
                  <Th>Design</Th>
                  <Th>State</Th>
                </tr>
              </thead>
              <tbody>
                {studies.map((s) => (
                  <tr key={s.id}>
                    <Td>
                      <Button
                        variant="quiet"
                        onClick={() => setSelected(s.id)}
                        aria-pressed={s.id === current}
                      >
                        {s.name}
                      </Button>
                    </Td>
                    <Td>
                      {s.parts} parts × {s.appraisers}{' '}
                      {s.appraiserKind === 'station' ? 'stations' : 'operators'} × {s.trials} trials,
                      tolerance {s.toleranceDeg}°
                    </Td>
                    <Td>
                      <StatusChip tone={s.status === 'finished' ? 'ok' : 'accent'}>
                        {s.status === 'finished' ? 'Finished' : 'Running'}
                      </StatusChip>
                    </Td>
                  </tr>
                ))}
              </tbody>
            </TableFrame>
          )}
        </QueryState>
      </Panel>
      {current ? <StudyDetail key={current} id={current} /> : null}
      {canEdit ? (
        <Panel title="Plan a new study" titleId="design-title">
          <p className="mb-3 text-graphite-300">
            Every appraiser measures every part in each trial, in a random order the station screen shows step
            by step (for operators: to whoever is signed in at the study's station). Study readings never
            change the units and print no traveler.
          </p>
          <DesignForm stations={stations} onCreated={setSelected} />
        </Panel>
      ) : null}
    </div>
  );
}
