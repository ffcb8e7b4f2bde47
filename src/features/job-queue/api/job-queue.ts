import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { apiRequest } from '#src/lib/api-client';

export type FailedJob = {
  id: string;
  queue: string;
  payload: unknown;
  error: string;
  retries: number;
  createdAt: string;
  failedAt: string | null;
};

export const jobsKeys = {
  all: ['jobs'] as const,
  lists: () => [...jobsKeys.all, 'list'] as const,
  list: (filters: { state: 'failed' }) => [...jobsKeys.lists(), filters] as const,
};

export const failedJobsQueryOptions = () =>
  queryOptions({
    queryKey: jobsKeys.list({ state: 'failed' }),
    queryFn: () => apiRequest<{ jobs: FailedJob[] }>('/api/admin/jobs/failed').then((b) => b.jobs),
    refetchInterval: 30_000,
  });

export function useFailedJobs() {
  return useQuery(failedJobsQueryOptions());
}

/** Puts a failed job back on its queue; it leaves the failed list once the worker picks it up. */
export function useReplayJob() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (id: string) =>
      apiRequest<void>(`/api/admin/jobs/${encodeURIComponent(id)}/replay`, { method: 'POST' }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: jobsKeys.lists() }),
  });
}
