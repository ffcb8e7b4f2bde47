import { queryOptions, useQuery } from '@tanstack/react-query';
import type { AuditEntry } from '../../../../shared/schemas/users';
import { apiRequest } from '../../../lib/api-client';

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
