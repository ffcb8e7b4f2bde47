import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { z } from 'zod';
import type {
  CalibrationView,
  ModelView,
  RegisterUnit,
  StationView,
  UnitDetail,
  UnitView,
  stationHealthSchema,
  stationKeyCreatedSchema,
} from '../../../../shared/schemas/line';
import { apiRequest, isApiError } from '../../../lib/api-client';
import { lineKeys } from './line-keys';

export type StationHealth = z.infer<typeof stationHealthSchema>;
export type StationKeyCreated = z.infer<typeof stationKeyCreatedSchema>;
export type PageSize = 'A4' | 'LETTER';
export type PrintedTraveler = {
  travelerId: string;
  printNumber: number;
  pageSize: PageSize;
  sha256: string;
  url: string;
};

const enc = encodeURIComponent;

export const modelsQueryOptions = () =>
  queryOptions({
    queryKey: lineKeys.models(),
    queryFn: () => apiRequest<{ models: ModelView[] }>('/api/models').then((b) => b.models),
    staleTime: 5 * 60_000,
  });

export function useModels() {
  return useQuery(modelsQueryOptions());
}

/** A unit with its history, or null when the serial is not registered (404 is an answer here). */
export async function fetchUnit(serial: string): Promise<UnitDetail | null> {
  try {
    return await apiRequest<UnitDetail>(`/api/units/${enc(serial)}`);
  } catch (error) {
    if (isApiError(error) && error.status === 404) return null;
    throw error;
  }
}

export const unitQueryOptions = (serial: string) =>
  queryOptions({
    queryKey: lineKeys.unit(serial),
    queryFn: () => fetchUnit(serial),
    staleTime: 5_000,
  });

export function useUnit(serial: string | null) {
  return useQuery({ ...unitQueryOptions(serial ?? ''), enabled: serial !== null && serial !== '' });
}

export function useRegisterUnit() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: RegisterUnit) =>
      apiRequest<{ unit: UnitView }>('/api/units', { method: 'POST', body: input }).then((b) => b.unit),
    onSuccess: (unit) => queryClient.invalidateQueries({ queryKey: lineKeys.unit(unit.serial) }),
  });
}

/** Prints (or reprints) the traveler of the unit's latest calibration; the unit's document list changes. */
export function usePrintTraveler() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ serial, pageSize }: { serial: string; pageSize: PageSize }) =>
      apiRequest<PrintedTraveler>(`/api/units/${enc(serial)}/traveler/print`, {
        method: 'POST',
        body: { pageSize },
      }),
    onSuccess: (_doc, { serial }) => queryClient.invalidateQueries({ queryKey: lineKeys.unit(serial) }),
  });
}

export const stationsQueryOptions = () =>
  queryOptions({
    queryKey: lineKeys.stationList(),
    queryFn: () => apiRequest<{ stations: StationView[] }>('/api/stations').then((b) => b.stations),
  });

export function useStations() {
  return useQuery(stationsQueryOptions());
}

export function useStationRecent(stationId: string) {
  return useQuery({
    queryKey: lineKeys.stationRecent(stationId),
    queryFn: () =>
      apiRequest<{ calibrations: CalibrationView[] }>(`/api/stations/${enc(stationId)}/recent?limit=20`).then(
        (b) => b.calibrations,
      ),
    refetchInterval: 60_000,
  });
}

export function useStationHealth(stationId: string) {
  return useQuery({
    queryKey: lineKeys.stationHealth(stationId),
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
    onSuccess: () => queryClient.invalidateQueries({ queryKey: lineKeys.stationList() }),
  });
}

type StationInput = { name: string; line: string; allowedModelIds: string[] };

export function useCreateStation() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: StationInput) =>
      apiRequest<{ station: StationView }>('/api/admin/stations', { method: 'POST', body: input }).then(
        (b) => b.station,
      ),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: lineKeys.stationList() }),
  });
}

export function useUpdateStation() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ id, patch }: { id: string; patch: Partial<StationInput> }) =>
      apiRequest<{ station: StationView }>(`/api/admin/stations/${enc(id)}`, {
        method: 'PATCH',
        body: patch,
      }).then((b) => b.station),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: lineKeys.stationList() }),
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
    onSuccess: () => queryClient.invalidateQueries({ queryKey: lineKeys.stationList() }),
  });
}

export function useRevokeStationKey() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ stationId, keyId }: { stationId: string; keyId: string }) =>
      apiRequest<void>(`/api/admin/stations/${enc(stationId)}/keys/${enc(keyId)}/revoke`, {
        method: 'POST',
      }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: lineKeys.stationList() }),
  });
}
