import { queryOptions, useQuery } from '@tanstack/react-query';
import type { OutboxMessage } from '#shared/schemas/outbox';
import { apiRequest } from '#src/lib/api-client';

export const outboxKeys = {
  all: ['outbox'] as const,
  lists: () => [...outboxKeys.all, 'list'] as const,
  list: (filters: Record<string, never> = {}) => [...outboxKeys.lists(), filters] as const,
  details: () => [...outboxKeys.all, 'detail'] as const,
  detail: (id: string) => [...outboxKeys.details(), id] as const,
};

export const outboxListQueryOptions = () =>
  queryOptions({
    queryKey: outboxKeys.list(),
    queryFn: () =>
      apiRequest<{ messages: OutboxMessage[] }>('/api/admin/outbox').then((body) => body.messages),
    // Invitations and reset links arrive seconds after an admin action: keep the list current.
    refetchInterval: 5_000,
  });

export function useOutbox() {
  return useQuery(outboxListQueryOptions());
}
