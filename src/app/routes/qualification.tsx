import { Link } from 'react-router';
import { Alert, Loading } from '#src/components/ui/alert';
import { PageHeader } from '#src/components/ui/panel';
import { useMe } from '#src/features/auth/api/me';
import { useStations } from '#src/features/stations/api/stations';
import { QualificationWorkspace } from '#src/features/qualification/components/qualification-workspace';

export function Component() {
  const stations = useStations();
  const me = useMe();
  const role = me.data?.role;
  return (
    <div>
      <title>Station qualification · Phasewright</title>
      <PageHeader
        title="Station qualification"
        lead="Whether each station may calibrate: its reference-unit readings against the certified values, the bias over time, and the reference units."
        actions={
          <>
            <Link
              to="/qualification/shifts"
              className="inline-flex min-h-target items-center px-2 font-semibold"
            >
              Plant shifts
            </Link>
            <Link
              to="/qualification/studies"
              className="inline-flex min-h-target items-center px-2 font-semibold"
            >
              Gauge R&R studies
            </Link>
          </>
        }
      />
      {stations.isPending ? <Loading label="Fetching stations…" /> : null}
      {stations.isError ? (
        <Alert tone="fault" title="Stations could not be read">
          {stations.error.message}
        </Alert>
      ) : null}
      {stations.data ? (
        <QualificationWorkspace
          stations={stations.data.map((s) => ({ id: s.id, name: s.name }))}
          canEdit={role === 'engineer' || role === 'admin'}
        />
      ) : null}
    </div>
  );
}
