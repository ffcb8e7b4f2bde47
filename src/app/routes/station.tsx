import { Navigate, useParams, useSearchParams } from 'react-router';
import type { StationView } from '#shared/schemas/stations';
import { Alert } from '#src/components/ui/alert';
import { QueryState } from '#src/components/ui/query-state';
import { LinkButton } from '#src/components/ui/button';
import { PageHeader } from '#src/components/ui/panel';
import { useStations } from '#src/features/stations/api/stations';
import {
  rememberedStationId,
  rememberStation,
  StationPicker,
} from '#src/features/stations/components/station-picker';
import { StationScreen } from '#src/features/stations/components/station-screen';
import { OpenAlerts } from '#src/features/alerts/components/open-alerts';
import { QualificationBanner } from '#src/features/qualification/components/qualification-banner';
import { StudyGuide } from '#src/features/qualification/components/study-guide';

/** /station picks the panel's station (or goes to the remembered one); /station/:id runs it. */
export function Component() {
  const { stationId } = useParams();
  const [search] = useSearchParams();
  const stations = useStations();
  return (
    <QueryState query={stations} pending="Fetching stations…" failed="Stations could not be read">
      {(list) => <StationRoute stations={list} stationId={stationId} choose={search.get('choose') === '1'} />}
    </QueryState>
  );
}

function StationRoute({
  stations,
  stationId,
  choose,
}: {
  stations: StationView[];
  stationId: string | undefined;
  choose: boolean;
}) {
  if (!stationId) {
    const remembered = rememberedStationId();
    if (remembered && !choose && stations.some((s) => s.id === remembered))
      return <Navigate to={`/station/${remembered}`} replace />;
    return (
      <div>
        <title>Choose the station · Phasewright</title>
        <PageHeader
          title="Which station is this?"
          lead="Choose the station this panel stands at. The choice is remembered on this panel."
        />
        <StationPicker stations={stations} />
      </div>
    );
  }

  const station = stations.find((s) => s.id === stationId);
  if (!station)
    return (
      <div className="flex flex-col items-start gap-4">
        <Alert tone="fault" title="No such station">
          This address names a station that does not exist (any more). Choose the station again.
        </Alert>
        <LinkButton to="/station?choose=1" variant="primary">
          Choose the station
        </LinkButton>
      </div>
    );
  rememberStation(station.id);
  return (
    <>
      <title>{`${station.name} · Station · Phasewright`}</title>
      <StationScreen
        key={station.id}
        station={station}
        banner={
          <>
            <QualificationBanner stationId={station.id} />
            <StudyGuide stationId={station.id} />
          </>
        }
        healthExtra={
          <section aria-labelledby="station-alerts-title" className="flex flex-col gap-2">
            <h2 id="station-alerts-title" className="text-lg font-semibold text-graphite-100">
              Offset chart alerts
            </h2>
            <OpenAlerts stationId={station.id} canAcknowledge={false} max={3} />
          </section>
        }
      />
    </>
  );
}
