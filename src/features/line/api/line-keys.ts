/**
 * Query keys of the station line (units, stations, models); nobody writes these inline. Events from a
 * station invalidate through these, so the shape matters: `stations.detail(id)` prefixes that station's
 * recent list and health.
 */
export const lineKeys = {
  all: ['line'] as const,
  models: () => [...lineKeys.all, 'models'] as const,
  units: () => [...lineKeys.all, 'units'] as const,
  unit: (serial: string) => [...lineKeys.units(), 'detail', serial.toUpperCase()] as const,
  stations: () => [...lineKeys.all, 'stations'] as const,
  stationList: () => [...lineKeys.stations(), 'list'] as const,
  station: (id: string) => [...lineKeys.stations(), 'detail', id] as const,
  stationRecent: (id: string) => [...lineKeys.station(id), 'recent'] as const,
  stationHealth: (id: string) => [...lineKeys.station(id), 'health'] as const,
};
