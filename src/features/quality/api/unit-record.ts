import { useQuery, useQueryClient } from '@tanstack/react-query';
import type { UnitRecord } from '#shared/schemas/unit-record';
import { apiRequest } from '#src/lib/api-client';
import { qualityKeys } from './quality';

const unitRecordKey = (serial: string) => [...qualityKeys.details(), 'unit-record', serial] as const;

/** A unit's whole record (quality staff, engineers, administrators). */
export function useUnitRecord(serial: string) {
  return useQuery({
    queryKey: unitRecordKey(serial),
    queryFn: () => apiRequest<UnitRecord>(`/api/units/${encodeURIComponent(serial)}/record`),
  });
}

/** After an export the record gains its audit entry: read it again once the download has been answered. */
export function useRefreshUnitRecord(serial: string) {
  const queryClient = useQueryClient();
  return () => {
    window.setTimeout(() => void queryClient.invalidateQueries({ queryKey: unitRecordKey(serial) }), 1500);
  };
}

export const unitRecordExportUrl = (serial: string, format: 'pdf' | 'zip') =>
  `/api/units/${encodeURIComponent(serial)}/record.${format}`;
