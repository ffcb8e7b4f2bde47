import { PageHeader } from '#src/components/ui/panel';
import { WorkOrderImport } from '#src/features/work-orders/components/work-order-import';

export function Component() {
  return (
    <div>
      <title>Work orders · Phasewright</title>
      <PageHeader
        title="Work-order import"
        lead="Register the units of a work order before they reach the line: serials, model and lots."
      />
      <WorkOrderImport />
    </div>
  );
}
