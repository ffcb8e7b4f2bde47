import { PageHeader } from '#src/components/ui/panel';
import { FailedJobs } from '#src/features/job-queue/components/failed-jobs';

export function Component() {
  return (
    <div>
      <title>Failed jobs · Phasewright</title>
      <PageHeader
        title="Failed jobs"
        lead="Background work that failed after its retries: calibrations, travelers, mail. Fix the cause, then replay."
      />
      <FailedJobs />
    </div>
  );
}
