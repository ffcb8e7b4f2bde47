import { keepPreviousData, queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type {
  AnalysisOptions,
  ComparisonView,
  ControlChartView,
  DistributionView,
  LimitHistory,
  LimitSetView,
  LineHealthView,
} from '#shared/schemas/analysis';
import { apiRequest } from '#src/lib/api-client';
import { watchedChartKeys } from '#src/lib/queries/watched-charts';
import { analysisKeys } from './analysis-keys';

export type AnalysisModel = { id: string; code: string; name: string };

export const analysisModelsQueryOptions = () =>
  queryOptions({
    queryKey: analysisKeys.models(),
    queryFn: () => apiRequest<{ models: AnalysisModel[] }>('/api/models').then((b) => b.models),
    staleTime: 5 * 60_000,
  });

export function useAnalysisModels() {
  return useQuery(analysisModelsQueryOptions());
}

export function useAnalysisOptions(model: string | null) {
  return useQuery({
    queryKey: analysisKeys.options(model ?? ''),
    queryFn: () => apiRequest<AnalysisOptions>(`/api/analysis/options?model=${encodeURIComponent(model!)}`),
    enabled: !!model,
    staleTime: 60_000,
  });
}

type ViewName = 'distribution' | 'control-chart' | 'comparison' | 'line-health';
type ViewOf = {
  distribution: DistributionView;
  'control-chart': ControlChartView;
  comparison: ComparisonView;
  'line-health': LineHealthView;
};

/** One view of the workspace for a query string built from the URL (see filter-state.ts). */
export const analysisViewQueryOptions = <N extends ViewName>(name: N, query: string) =>
  queryOptions({
    queryKey: analysisKeys.view(name, query),
    queryFn: ({ signal }) => apiRequest<ViewOf[N]>(`/api/analysis/${name}?${query}`, { signal }),
    staleTime: 30_000,
    placeholderData: keepPreviousData,
  });

export function useAnalysisView<N extends ViewName>(name: N, query: string, enabled: boolean) {
  return useQuery({ ...analysisViewQueryOptions(name, query), enabled });
}

/** Frozen limits of one station (or the model, station '') for a figure: in force and every version. */
export function useLimitHistory(model: string | null, station: string, figure: string) {
  return useQuery({
    queryKey: analysisKeys.limits(model ?? '', station, figure),
    queryFn: () =>
      apiRequest<LimitHistory>(
        `/api/analysis/limits?${new URLSearchParams({ model: model!, figure, ...(station ? { station } : {}) })}`,
      ),
    enabled: !!model,
  });
}

/** Saves limits from a baseline window, or a clearing version; charts and limits are read again. */
export function useSaveLimits() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (
      input:
        | { action: 'freeze'; body: Record<string, unknown> }
        | { action: 'clear'; body: Record<string, unknown> },
    ) =>
      apiRequest<LimitSetView>(
        input.action === 'freeze' ? '/api/analysis/limits' : '/api/analysis/limits/clear',
        {
          method: 'POST',
          body: input.body,
        },
      ),
    // The watched charts judge against the same limits (station's own, else the model's): read them again too.
    onSuccess: () =>
      Promise.all([
        queryClient.invalidateQueries({ queryKey: analysisKeys.all }),
        queryClient.invalidateQueries({ queryKey: watchedChartKeys.all }),
      ]),
  });
}
