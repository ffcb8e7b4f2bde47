import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { AlertView, WatchedChartSettings, WatchedChartView } from '#shared/schemas/alerts';
import { apiRequest } from '#src/lib/api-client';
import { watchedChartKeys, watchedChartsQueryOptions } from '#src/lib/queries/watched-charts';

/** Query keys of the chart alerts; nobody writes these inline. */
export const alertKeys = {
  all: ['alerts'] as const,
  lists: () => [...alertKeys.all, 'list'] as const,
  list: (filters: { status: string; stationId?: string }) => [...alertKeys.lists(), filters] as const,
  subscription: () => [...alertKeys.all, 'subscription'] as const,
};

export const openAlertsQueryOptions = (stationId?: string) =>
  queryOptions({
    queryKey: alertKeys.list({ status: 'open', stationId }),
    queryFn: () =>
      apiRequest<{ alerts: AlertView[] }>(
        `/api/alerts?status=open${stationId ? `&stationId=${encodeURIComponent(stationId)}` : ''}`,
      ).then((b) => b.alerts),
    refetchInterval: 60_000,
  });

export function useOpenAlerts(stationId?: string) {
  return useQuery(openAlertsQueryOptions(stationId));
}

export function useAcknowledgeAlert() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ id, comment }: { id: string; comment: string }) =>
      apiRequest<void>(`/api/alerts/${encodeURIComponent(id)}/acknowledge`, {
        method: 'POST',
        body: { comment },
      }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: alertKeys.lists() }),
  });
}

export function useAlertSubscription() {
  return useQuery({
    queryKey: alertKeys.subscription(),
    queryFn: () => apiRequest<{ subscribed: boolean }>('/api/alerts/subscription').then((b) => b.subscribed),
  });
}

export function useSetAlertSubscription() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (subscribed: boolean) =>
      apiRequest<{ subscribed: boolean }>('/api/alerts/subscription', {
        method: 'PUT',
        body: { subscribed },
      }),
    onSuccess: (b) => queryClient.setQueryData(alertKeys.subscription(), b.subscribed),
  });
}

export function useWatchedCharts(modelId: string | null) {
  return useQuery(watchedChartsQueryOptions(modelId));
}

export function useSetWatchedChart() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: WatchedChartSettings) =>
      apiRequest<WatchedChartView>('/api/alerts/charts', { method: 'PUT', body }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: watchedChartKeys.all }),
  });
}
