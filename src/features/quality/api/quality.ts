import { keepPreviousData, queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { ModelView } from '#shared/schemas/models';
import type { StationView } from '#shared/schemas/stations';
import type {
  BulkHold,
  BulkHoldResult,
  HeldUnitRow,
  InvestigationDetail,
  InvestigationSummary,
  InvestigationUpdate,
  NewInvestigation,
  MeasurementTrace,
  Release,
  ReleaseResult,
  SavedSearch,
  SearchChoices,
  UnitSearchPage,
} from '#shared/schemas/quality';
import { apiRequest } from '#src/lib/api-client';

/** Search filters as the form holds them: every value a string, '' meaning "any". */
export type SearchForm = Record<string, string>;
export type SearchQuery = SearchForm & { sort: string; dir: 'asc' | 'desc'; page: string; pageSize: string };

export const qualityKeys = {
  all: ['quality'] as const,
  lists: () => [...qualityKeys.all, 'list'] as const,
  held: () => [...qualityKeys.lists(), 'held'] as const,
  search: (q: SearchQuery) => [...qualityKeys.lists(), 'search', q] as const,
  investigations: () => [...qualityKeys.lists(), 'investigations'] as const,
  choices: () => [...qualityKeys.all, 'choices'] as const,
  savedSearches: () => [...qualityKeys.lists(), 'saved-searches'] as const,
  details: () => [...qualityKeys.all, 'detail'] as const,
  detail: (id: string) => [...qualityKeys.details(), 'investigation', id] as const,
};

/** The non-empty filters as URL search parameters (the CSV export takes the same). */
export function searchParams(q: SearchForm): string {
  return new URLSearchParams(Object.entries(q).filter(([, v]) => v !== '')).toString();
}

export const heldQueryOptions = () =>
  queryOptions({
    queryKey: qualityKeys.held(),
    queryFn: () => apiRequest<{ holds: HeldUnitRow[] }>('/api/quality/holds').then((b) => b.holds),
    staleTime: 0,
  });

export function useHeldUnits() {
  return useQuery(heldQueryOptions());
}

export function useUnitSearch(q: SearchQuery | null) {
  return useQuery({
    queryKey: qualityKeys.search(q ?? ({} as SearchQuery)),
    queryFn: () => apiRequest<UnitSearchPage>(`/api/quality/units?${searchParams(q!)}`),
    enabled: q !== null,
    placeholderData: keepPreviousData,
  });
}

/** Models, stations, people, recipe and engine versions for the search form's lists. */
export function useSearchChoices() {
  return useQuery({
    queryKey: qualityKeys.choices(),
    staleTime: 5 * 60_000,
    queryFn: async () => {
      const [m, s, more] = await Promise.all([
        apiRequest<{ models: ModelView[] }>('/api/models'),
        apiRequest<{ stations: StationView[] }>('/api/stations'),
        apiRequest<SearchChoices>('/api/quality/search-choices'),
      ]);
      return { models: m.models, stations: s.stations, ...more };
    },
  });
}

export function useSavedSearches() {
  return useQuery({
    queryKey: qualityKeys.savedSearches(),
    queryFn: () =>
      apiRequest<{ savedSearches: SavedSearch[] }>('/api/quality/saved-searches').then(
        (b) => b.savedSearches,
      ),
  });
}

export function useSaveSearch() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: { name: string; filter: SearchForm }) =>
      apiRequest<SavedSearch>('/api/quality/saved-searches', { method: 'POST', body: input }),
    onSuccess: () => qc.invalidateQueries({ queryKey: qualityKeys.savedSearches() }),
  });
}

export function useDeleteSavedSearch() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: string) =>
      apiRequest<void>(`/api/quality/saved-searches/${encodeURIComponent(id)}`, { method: 'DELETE' }),
    onSuccess: () => qc.invalidateQueries({ queryKey: qualityKeys.savedSearches() }),
  });
}

export const investigationsQueryOptions = () =>
  queryOptions({
    queryKey: qualityKeys.investigations(),
    queryFn: () =>
      apiRequest<{ investigations: InvestigationSummary[] }>('/api/quality/investigations').then(
        (b) => b.investigations,
      ),
  });

export function useInvestigations() {
  return useQuery(investigationsQueryOptions());
}

export function useInvestigation(id: string) {
  return useQuery({
    queryKey: qualityKeys.detail(id),
    queryFn: () => apiRequest<InvestigationDetail>(`/api/quality/investigations/${encodeURIComponent(id)}`),
  });
}

/** Holds and releases change lists, cases and unit pages alike: ask for all of them again. */
function useInvalidateAll() {
  const qc = useQueryClient();
  return () => qc.invalidateQueries({ queryKey: qualityKeys.all });
}

export function useBulkHold() {
  const invalidate = useInvalidateAll();
  return useMutation({
    mutationFn: (input: BulkHold) =>
      apiRequest<BulkHoldResult>('/api/quality/holds', { method: 'POST', body: input }),
    onSuccess: invalidate,
  });
}

export function useRelease() {
  const invalidate = useInvalidateAll();
  return useMutation({
    mutationFn: (input: Release) =>
      apiRequest<ReleaseResult>('/api/quality/releases', { method: 'POST', body: input }),
    onSuccess: invalidate,
  });
}

export function useCreateInvestigation() {
  const invalidate = useInvalidateAll();
  return useMutation({
    mutationFn: (input: NewInvestigation) =>
      apiRequest<InvestigationDetail>('/api/quality/investigations', { method: 'POST', body: input }),
    onSuccess: invalidate,
  });
}

export function useUpdateInvestigation(id: string) {
  const invalidate = useInvalidateAll();
  return useMutation({
    mutationFn: (input: InvestigationUpdate) =>
      apiRequest<InvestigationDetail>(`/api/quality/investigations/${encodeURIComponent(id)}`, {
        method: 'PATCH',
        body: input,
      }),
    onSuccess: invalidate,
  });
}

export function useAddComment(id: string) {
  const invalidate = useInvalidateAll();
  return useMutation({
    mutationFn: (body: string) =>
      apiRequest<InvestigationDetail>(`/api/quality/investigations/${encodeURIComponent(id)}/comments`, {
        method: 'POST',
        body: { body },
      }),
    onSuccess: invalidate,
  });
}

export function useUnitMeasurements(serial: string) {
  return useQuery({
    queryKey: [...qualityKeys.details(), 'unit', serial] as const,
    queryFn: () =>
      apiRequest<{
        calibrations: {
          measurementId: string;
          purpose: string;
          computedAt: string;
          verdict: string;
          attempt: number | null;
          stationName: string;
          result: {
            offsetDeg: number | null;
            edges: { sensor: string; edge: string; residualDeg: number | null }[];
          } | null;
        }[];
      }>(`/api/units/${encodeURIComponent(serial)}`).then((d) =>
        d.calibrations.filter((c) => c.purpose === 'station'),
      ),
  });
}

export function useMeasurementTrace(measurementId: string | null) {
  return useQuery({
    queryKey: [...qualityKeys.details(), 'trace', measurementId] as const,
    queryFn: () =>
      apiRequest<MeasurementTrace>(`/api/quality/measurements/${encodeURIComponent(measurementId!)}/trace`),
    enabled: measurementId !== null,
    staleTime: Infinity,
  });
}
