import { Link } from 'react-router';
import { Alert, Loading } from '#src/components/ui/alert';
import { PageHeader } from '#src/components/ui/panel';
import { useMe } from '#src/features/auth/api/me';
import { useStations } from '#src/features/stations/api/stations';
import { GaugeStudies } from '#src/features/qualification/components/gauge-studies';

export function Component() {
  const stations = useStations();
  const me = useMe();
  const role = me.data?.role;
  return (
    <div>
      <title>Gauge R&R studies · Phasewright</title>
      <PageHeader
        title="Gauge R&R studies"
        lead="How much of the spread in offsets the stations themselves add: repeatability, reproducibility and part variation, by the ANOVA and the average-and-range methods."
        actions={
          <Link to="/qualification" className="inline-flex min-h-target items-center px-2 font-semibold">
            Station qualification
          </Link>
        }
      />
      {stations.isPending ? <Loading label="Fetching stations…" /> : null}
      {stations.isError ? <Alert tone="fault">{stations.error.message}</Alert> : null}
      {stations.data ? (
        <GaugeStudies
          stations={stations.data.map((s) => ({ id: s.id, name: s.name }))}
          canEdit={role === 'engineer' || role === 'admin'}
        />
      ) : null}
    </div>
  );
}
