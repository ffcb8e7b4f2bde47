/**
 * Query keys of the stations feature; nobody writes these inline. Events from a station invalidate
 * through these, so the shape matters: `detail(id)` prefixes that station's recent list and health.
 */
export const stationKeys = {
  all: ['stations'] as const,
  list: () => [...stationKeys.all, 'list'] as const,
  detail: (id: string) => [...stationKeys.all, 'detail', id] as const,
  recent: (id: string) => [...stationKeys.detail(id), 'recent'] as const,
  health: (id: string) => [...stationKeys.detail(id), 'health'] as const,
};
