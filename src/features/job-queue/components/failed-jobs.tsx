import { useState } from 'react';
import { Alert, Loading } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { formatDateTime } from '#src/lib/format';
import { useFailedJobs, useReplayJob } from '../api/job-queue';

/** Jobs that used up their retries: what they were for, why they failed, and a way to run them again. */
export function FailedJobs() {
  const jobs = useFailedJobs();
  const replay = useReplayJob();
  const [notice, setNotice] = useState<{ tone: 'ok' | 'fault'; body: string } | null>(null);

  return (
    <div className="flex flex-col gap-5">
      {notice ? (
        <Alert tone={notice.tone} title={notice.tone === 'ok' ? 'Replayed' : 'Not replayed'}>
          {notice.body}
        </Alert>
      ) : null}
      {jobs.isPending ? <Loading label="Fetching failed jobs…" /> : null}
      {jobs.isError ? (
        <Alert tone="fault" title="Failed jobs could not be read">
          {jobs.error.message}
        </Alert>
      ) : null}
      {jobs.isSuccess ? (
        <TableFrame caption="Jobs that failed after their retries, newest first">
          <thead>
            <tr>
              <Th>Failed</Th>
              <Th>Queue</Th>
              <Th>Error</Th>
              <Th>Payload</Th>
              <Th>Retries</Th>
              <Th>
                <span className="sr-only">Actions</span>
              </Th>
            </tr>
          </thead>
          <tbody data-testid="failed-job-rows">
            {jobs.data.map((j) => (
              <tr key={j.id} className="align-top hover:bg-graphite-850">
                <Td className="whitespace-nowrap">
                  {formatDateTime(j.failedAt)}
                  <span className="block text-sm text-graphite-400">
                    queued {formatDateTime(j.createdAt)}
                  </span>
                </Td>
                <Td className="font-mono">{j.queue}</Td>
                <Td className="max-w-sm text-fault">{j.error}</Td>
                <Td>
                  <pre className="max-h-40 max-w-md overflow-auto bg-graphite-950 p-2 font-mono text-xs text-graphite-200">
                    {JSON.stringify(j.payload, null, 2)}
                  </pre>
                </Td>
                <Td>{j.retries}</Td>
                <Td>
                  <Button
                    busy={replay.isPending && replay.variables === j.id}
                    aria-label={`Replay ${j.queue} job ${j.id}`}
                    onClick={() =>
                      replay.mutate(j.id, {
                        onSuccess: () =>
                          setNotice({ tone: 'ok', body: `The ${j.queue} job is queued again.` }),
                        onError: (e) => setNotice({ tone: 'fault', body: e.message }),
                      })
                    }
                  >
                    Replay
                  </Button>
                </Td>
              </tr>
            ))}
            {jobs.data.length === 0 ? (
              <tr>
                <Td colSpan={6} className="py-8 text-center text-graphite-400">
                  No failed job. Everything the queue was given has run.
                </Td>
              </tr>
            ) : null}
          </tbody>
        </TableFrame>
      ) : null}
    </div>
  );
}
