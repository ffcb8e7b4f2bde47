import { PageHeader } from '#src/components/ui/panel';
import { OutboxView } from '#src/features/outbox/components/outbox-view';

export function Component() {
  return (
    <div>
      <title>Outbox · Phasewright</title>
      <PageHeader
        title="Outbox"
        lead="Mail Phasewright has sent, as the local mail server received it. Links open in a new tab."
      />
      <OutboxView />
    </div>
  );
}
