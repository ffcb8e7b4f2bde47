import { PageHeader } from '#src/components/ui/panel';
import { StationsAdmin } from '#src/features/stations/components/stations-admin';

export function Component() {
  return (
    <div>
      <title>Stations · Phasewright</title>
      <PageHeader
        title="Stations"
        lead="The calibration stations, the models each may measure, who is at them, and the keys they post with."
      />
      <StationsAdmin />
    </div>
  );
}
