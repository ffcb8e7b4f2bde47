import { PageHeader, Panel } from '#src/components/ui/panel';
import { HealthDetails } from '#src/features/system/components/health-view';

export function Component() {
  return (
    <div>
      <title>System · Phasewright</title>
      <PageHeader title="System" lead="What the server reports about its database and its background jobs." />
      <Panel>
        <HealthDetails />
      </Panel>
    </div>
  );
}
