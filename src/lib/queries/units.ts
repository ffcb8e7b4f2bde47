import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { normaliseSerial } from '#shared/schemas/serial';
import type { PageSize } from '#shared/schemas/travelers';
import type { RegisterUnit, UnitDetail, UnitView } from '#shared/schemas/units';
import { apiRequest, isApiError } from '../api-client';

/**
 * Units read by more than one feature (the station screen, the unit pages): one key factory, one
 * `queryOptions`, and the mutations that change a unit's detail, which own their invalidation.
 */
export const unitKeys = {
  all: ['units'] as const,
  details: () => [...unitKeys.all, 'detail'] as const,
  /** Keyed by the serial's one spelling, so "eol-1" and "EOL-1" share their cache entry. */
  detail: (serial: string) => [...unitKeys.details(), normaliseSerial(serial)] as const,
};

export type PrintedTraveler = {
  travelerId: string;
  printNumber: number;
  pageSize: PageSize;
  sha256: string;
  url: string;
};

const enc = encodeURIComponent;

/** A unit with its history, or null when the serial is not registered (404 is an answer here). */
async function fetchUnit(serial: string): Promise<UnitDetail | null> {
  try {
    return await apiRequest<UnitDetail>(`/api/units/${enc(serial)}`);
  } catch (error) {
    if (isApiError(error) && error.status === 404) return null;
    throw error;
  }
}

export const unitQueryOptions = (serial: string) =>
  queryOptions({
    queryKey: unitKeys.detail(serial),
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
    onSuccess: (unit) => queryClient.invalidateQueries({ queryKey: unitKeys.detail(unit.serial) }),
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
    onSuccess: (_doc, { serial }) => queryClient.invalidateQueries({ queryKey: unitKeys.detail(serial) }),
  });
}
