import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { CalibrationView } from '#shared/schemas/calibrations';
import type { CreateStation, StationHealth, StationKeyCreated, StationView } from '#shared/schemas/stations';
import { apiRequest } from '#src/lib/api-client';
import { stationKeys } from './station-keys';

const enc = encodeURIComponent;

export const stationsQueryOptions = () =>
  queryOptions({
    queryKey: stationKeys.list(),
    queryFn: () => apiRequest<{ stations: StationView[] }>('/api/stations').then((b) => b.stations),
  });

export function useStations() {
  return useQuery(stationsQueryOptions());
}

export function useStationRecent(stationId: string) {
  return useQuery({
    queryKey: stationKeys.recent(stationId),
    queryFn: () =>
      apiRequest<{ calibrations: CalibrationView[] }>(`/api/stations/${enc(stationId)}/recent?limit=20`).then(
        (b) => b.calibrations,
      ),
    refetchInterval: 60_000,
  });
}

export function useStationHealth(stationId: string) {
  return useQuery({
    queryKey: stationKeys.health(stationId),
    queryFn: () => apiRequest<StationHealth>(`/api/stations/${enc(stationId)}/health`),
    refetchInterval: 10_000,
    staleTime: 5_000,
  });
}

/** Tells the server this operator now runs the station panel; measurements name them from here on. */
export function useAttendStation() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (stationId: string) =>
      apiRequest<{ stationId: string }>(`/api/stations/${enc(stationId)}/attend`, { method: 'POST' }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: stationKeys.list() }),
  });
}

export function useCreateStation() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: CreateStation) =>
      apiRequest<{ station: StationView }>('/api/admin/stations', { method: 'POST', body: input }).then(
        (b) => b.station,
      ),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: stationKeys.list() }),
  });
}

export function useUpdateStation() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ id, patch }: { id: string; patch: Partial<CreateStation> }) =>
      apiRequest<{ station: StationView }>(`/api/admin/stations/${enc(id)}`, {
        method: 'PATCH',
        body: patch,
      }).then((b) => b.station),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: stationKeys.list() }),
  });
}

export function useCreateStationKey() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ stationId, label }: { stationId: string; label: string }) =>
      apiRequest<StationKeyCreated>(`/api/admin/stations/${enc(stationId)}/keys`, {
        method: 'POST',
        body: { label },
      }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: stationKeys.list() }),
  });
}

export function useRevokeStationKey() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ stationId, keyId }: { stationId: string; keyId: string }) =>
      apiRequest<void>(`/api/admin/stations/${enc(stationId)}/keys/${enc(keyId)}/revoke`, {
        method: 'POST',
      }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: stationKeys.list() }),
  });
}
