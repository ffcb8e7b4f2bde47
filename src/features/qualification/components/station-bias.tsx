import { useState } from 'react';
import { Alert, Loading } from '#src/components/ui/alert';
import { SelectField } from '#src/components/ui/field';
import { Panel } from '#src/components/ui/panel';
import { useShifts, useStationChoices, useStationReadings } from '../api/qualification';
import { BiasChart } from './bias-chart';

/**
 * The bias chart of one station (reference-unit readings against their certified values) as a section of
 * another screen: the statistics workspace composes it beside its own charts.
 */
export function StationBiasSection() {
  const stations = useStationChoices();
  const [chosen, setChosen] = useState<string | null>(null);
  const stationId = chosen ?? stations.data?.[0]?.id ?? null;
  const readings = useStationReadings(stationId);
  const tz = useShifts().data?.timeZone ?? 'UTC';
  return (
    <Panel title="Station bias against reference units" titleId="station-bias-title">
      <p className="mb-3 text-graphite-300">
        Each reading of a reference unit minus its certified value: a station drifting off shows here before
        its production offsets do. Locks, policies and reference units are on the station qualification page.
      </p>
      {stations.isPending ? <Loading label="Fetching stations…" /> : null}
      {stations.isError ? <Alert tone="fault">{stations.error.message}</Alert> : null}
      {stations.data?.length ? (
        <div className="mb-3 max-w-sm">
          <SelectField
            label="Station for the bias chart"
            value={stationId ?? ''}
            onChange={(e) => setChosen(e.target.value)}
            options={stations.data.map((s) => ({ value: s.id, label: s.name }))}
          />
        </div>
      ) : null}
      {readings.isPending && stationId ? <Loading /> : null}
      {readings.data ? <BiasChart readings={readings.data} timeZone={tz} /> : null}
    </Panel>
  );
}
