import { PageHeader } from '#src/components/ui/panel';
import { AuditLog } from '#src/features/audit/components/audit-log';

export function Component() {
  return (
    <div>
      <title>Audit log · Phasewright</title>
      <PageHeader
        title="Audit log"
        lead="Who did what, when and why: sign-ins, refusals and every change to an account."
      />
      <AuditLog />
    </div>
  );
}
