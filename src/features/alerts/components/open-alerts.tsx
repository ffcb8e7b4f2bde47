import { useState } from 'react';
import { Link } from 'react-router';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import { acknowledgeAlertSchema, type AlertView } from '#shared/schemas/alerts';
import { Button } from '#src/components/ui/button';
import { CheckboxField, TextAreaField } from '#src/components/ui/field';
import { QueryState } from '#src/components/ui/query-state';
import {
  useAcknowledgeAlert,
  useAlertSubscription,
  useOpenAlerts,
  useSetAlertSubscription,
} from '../api/alerts';
import { applyServerErrors } from '#src/lib/form-errors';

function AcknowledgeForm({ alert }: { alert: AlertView }) {
  const ack = useAcknowledgeAlert();
  const form = useForm<
    z.input<typeof acknowledgeAlertSchema>,
    unknown,
    z.output<typeof acknowledgeAlertSchema>
  >({
    resolver: zodResolver(acknowledgeAlertSchema),
    defaultValues: { comment: '' },
  });
  const [banner, setBanner] = useState<string | null>(null);
  const submit = form.handleSubmit(async ({ comment }) => {
    setBanner(null);
    try {
      await ack.mutateAsync({ id: alert.id, comment });
    } catch (error) {
      setBanner(applyServerErrors(error, form.setError, ['comment']));
    }
  });
  return (
    <form className="flex flex-col gap-2" onSubmit={submit} noValidate>
      <TextAreaField
        label="What was found or done"
        rows={2}
        error={form.formState.errors.comment?.message ?? banner ?? undefined}
        {...form.register('comment')}
      />
      <div>
        <Button type="submit" variant="secondary" busy={ack.isPending}>
          Acknowledge
        </Button>
      </div>
    </form>
  );
}

function fmtOffset(v: number) {
  return `${v.toFixed(2)} °`;
}

/**
 * Open alerts of the watched control charts (each station × model, offsets), newest first. Engineers
 * acknowledge them with a comment; everyone else reads them.
 */
export function OpenAlerts({
  stationId,
  canAcknowledge,
  max = 10,
}: {
  stationId?: string;
  canAcknowledge: boolean;
  max?: number;
}) {
  const alerts = useOpenAlerts(stationId);
  return (
    <QueryState
      query={alerts}
      pending="Reading alerts…"
      failed="Alerts could not be read"
      isEmpty={(list) => list.length === 0}
      empty={<p className="text-graphite-300">No open alert: every watched chart is in control.</p>}
    >
      {(list) => (
        <div className="flex flex-col gap-3">
          <p className="text-graphite-200">
            {list.length} open alert{list.length === 1 ? '' : 's'}
            {list.length > max ? `; the newest ${max} are shown` : ''}.
          </p>
          <ul className="flex flex-col gap-3">
            {list.slice(0, max).map((a) => {
              const last = a.points[a.points.length - 1];
              return (
                <li key={a.id} className="flex flex-col gap-2 border-l-4 border-warn bg-graphite-850 p-3">
                  <p className="font-semibold text-graphite-50">
                    {a.station} · {a.model}: {a.ruleText}
                  </p>
                  <p className="text-graphite-300">
                    {a.chartLabel}. Raised {new Date(a.raisedAt).toLocaleString()}, broken {a.hits} time
                    {a.hits === 1 ? '' : 's'} since
                    {last ? (
                      <>
                        ; latest unit{' '}
                        <Link
                          className="text-copper-300 underline"
                          to={`/units/${encodeURIComponent(last.serial)}`}
                        >
                          {last.serial}
                        </Link>{' '}
                        at {fmtOffset(last.value)}
                      </>
                    ) : null}
                    .
                  </p>
                  {canAcknowledge ? <AcknowledgeForm alert={a} /> : null}
                </li>
              );
            })}
          </ul>
        </div>
      )}
    </QueryState>
  );
}

export function AlertSubscriptionToggle() {
  const sub = useAlertSubscription();
  const set = useSetAlertSubscription();
  if (sub.isPending || sub.isError) return null;
  return (
    <CheckboxField
      label="E-mail me when a chart raises an alert"
      checked={sub.data}
      disabled={set.isPending}
      onChange={(e) => set.mutate(e.target.checked)}
    />
  );
}
