import { useState } from 'react';
import { Link } from 'react-router';
import type { AlertView } from '#shared/schemas/alerts';
import { Alert, Loading } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { CheckboxField, TextAreaField } from '#src/components/ui/field';
import {
  useAcknowledgeAlert,
  useAlertSubscription,
  useOpenAlerts,
  useSetAlertSubscription,
} from '../api/alerts';

function AcknowledgeForm({ alert }: { alert: AlertView }) {
  const [comment, setComment] = useState('');
  const ack = useAcknowledgeAlert();
  return (
    <form
      className="flex flex-col gap-2"
      onSubmit={(e) => {
        e.preventDefault();
        ack.mutate({ id: alert.id, comment });
      }}
    >
      <TextAreaField
        label="What was found or done"
        rows={2}
        value={comment}
        onChange={(e) => setComment(e.target.value)}
        error={ack.error?.message}
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
  if (alerts.isPending) return <Loading label="Reading alerts…" />;
  if (alerts.isError) return <Alert tone="fault">{alerts.error.message}</Alert>;
  if (alerts.data.length === 0)
    return <p className="text-graphite-300">No open alert: every watched chart is in control.</p>;
  return (
    <div className="flex flex-col gap-3">
      <p className="text-graphite-200">
        {alerts.data.length} open alert{alerts.data.length === 1 ? '' : 's'}
        {alerts.data.length > max ? `; the newest ${max} are shown` : ''}.
      </p>
      <ul className="flex flex-col gap-3">
        {alerts.data.slice(0, max).map((a) => {
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
