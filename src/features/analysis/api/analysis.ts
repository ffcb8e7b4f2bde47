import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import type {
  AnalysisOptions,
  ComparisonView,
  ControlChartView,
  DistributionView,
  LineHealthView,
} from '../../../../shared/schemas/analysis';
import { apiRequest } from '../../../lib/api-client';
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
