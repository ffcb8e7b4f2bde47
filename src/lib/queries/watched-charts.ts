import { queryOptions } from '@tanstack/react-query';
import type { WatchedChartView } from '#shared/schemas/alerts';
import { apiRequest } from '../api-client';

/**
 * Watched charts of a model, read by the alerts feature and invalidated by the line statistics: saving or
 * clearing frozen limits changes which limits a watched chart judges against (decision 45).
 */
export const watchedChartKeys = {
  all: ['watched-charts'] as const,
  list: (modelId: string) => [...watchedChartKeys.all, modelId] as const,
};

export const watchedChartsQueryOptions = (modelId: string | null) =>
  queryOptions({
    queryKey: watchedChartKeys.list(modelId ?? ''),
    queryFn: () =>
      apiRequest<{ charts: WatchedChartView[] }>(
        `/api/alerts/charts?modelId=${encodeURIComponent(modelId!)}`,
      ).then((b) => b.charts),
    enabled: !!modelId,
  });
