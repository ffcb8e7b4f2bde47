import { queryOptions, useQuery } from '@tanstack/react-query';
import type { AuditEntry } from '#shared/schemas/audit';
import { apiRequest } from '#src/lib/api-client';

export type AuditFilters = { limit: number };

export const auditKeys = {
  all: ['audit'] as const,
  lists: () => [...auditKeys.all, 'list'] as const,
  list: (filters: AuditFilters) => [...auditKeys.lists(), filters] as const,
  details: () => [...auditKeys.all, 'detail'] as const,
  detail: (id: number) => [...auditKeys.details(), id] as const,
};

export const auditListQueryOptions = (filters: AuditFilters) =>
  queryOptions({
    queryKey: auditKeys.list(filters),
    // Every admin action adds entries; opening the log always asks again.
    staleTime: 0,
    queryFn: () =>
      apiRequest<{ entries: AuditEntry[] }>(`/api/admin/audit?limit=${filters.limit}`).then(
        (body) => body.entries,
      ),
  });

export function useAuditLog(filters: AuditFilters) {
  return useQuery(auditListQueryOptions(filters));
}

/** Quality's filtered trail (every value a string from the form, '' meaning "any"). */
export type AuditTrailFilters = Record<string, string>;

export function auditTrailParams(f: AuditTrailFilters): string {
  return new URLSearchParams(Object.entries(f).filter(([, v]) => v !== '')).toString();
}

export const auditTrailQueryOptions = (filters: AuditTrailFilters) =>
  queryOptions({
    queryKey: [...auditKeys.lists(), 'trail', filters] as const,
    staleTime: 0,
    queryFn: () =>
      apiRequest<{ entries: AuditEntry[] }>(`/api/audit?${auditTrailParams(filters)}`).then((b) => b.entries),
  });

export function useAuditTrail(filters: AuditTrailFilters) {
  return useQuery(auditTrailQueryOptions(filters));
}
