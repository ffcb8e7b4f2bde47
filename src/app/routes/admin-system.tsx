import { PageHeader, Panel } from '../../components/ui/panel';
import { HealthDetails } from '../../features/system/components/health-view';

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
