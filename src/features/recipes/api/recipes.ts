import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { Recipe } from '#shared/schemas/recipe';
import type {
  ModelDetailView,
  ModelInput,
  ModelSummaryView,
  RecipeVersionView,
} from '#shared/schemas/recipes';
import type { RecipeFieldChange } from '#shared/recipe/recipe-fields';
import { apiRequest } from '#src/lib/api-client';

export const recipesKeys = {
  all: ['recipes'] as const,
  lists: () => [...recipesKeys.all, 'list'] as const,
  list: () => [...recipesKeys.lists(), 'models'] as const,
  details: () => [...recipesKeys.all, 'detail'] as const,
  model: (id: string) => [...recipesKeys.details(), 'model', id] as const,
  version: (id: string) => [...recipesKeys.details(), 'version', id] as const,
  diff: (fromId: string, toId: string) => [...recipesKeys.details(), 'diff', fromId, toId] as const,
  settings: () => [...recipesKeys.all, 'settings'] as const,
};

export const modelsQueryOptions = () =>
  queryOptions({
    queryKey: recipesKeys.list(),
    queryFn: () => apiRequest<{ models: ModelSummaryView[] }>('/api/models').then((b) => b.models),
  });

export const modelQueryOptions = (id: string) =>
  queryOptions({
    queryKey: recipesKeys.model(id),
    queryFn: () => apiRequest<ModelDetailView>(`/api/models/${encodeURIComponent(id)}`),
  });

export const versionQueryOptions = (id: string) =>
  queryOptions({
    queryKey: recipesKeys.version(id),
    queryFn: () => apiRequest<RecipeVersionView>(`/api/recipes/${encodeURIComponent(id)}`),
  });

export const diffQueryOptions = (fromId: string, toId: string) =>
  queryOptions({
    queryKey: recipesKeys.diff(fromId, toId),
    queryFn: () =>
      apiRequest<{ changes: RecipeFieldChange[] }>(
        `/api/recipes/${encodeURIComponent(toId)}/diff?against=${encodeURIComponent(fromId)}`,
      ).then((b) => b.changes),
  });

export const useModels = () => useQuery(modelsQueryOptions());
export const useModel = (id: string) => useQuery(modelQueryOptions(id));
export const useVersion = (id: string) => useQuery(versionQueryOptions(id));
export const useDiff = (fromId: string | null, toId: string | null) =>
  useQuery({ ...diffQueryOptions(fromId ?? '', toId ?? ''), enabled: !!fromId && !!toId && fromId !== toId });
export const useRecipeSettings = () =>
  useQuery({
    queryKey: recipesKeys.settings(),
    queryFn: () => apiRequest<{ singlePersonRelease: boolean }>('/api/recipe-settings'),
    staleTime: Infinity,
  });

/** After any change, the fresh version goes into the cache and every list and model is read again. */
function useVersionChanged() {
  const queryClient = useQueryClient();
  return async (v: RecipeVersionView) => {
    queryClient.setQueryData(recipesKeys.version(v.id), v);
    await queryClient.invalidateQueries({ queryKey: recipesKeys.lists() });
    await queryClient.invalidateQueries({ queryKey: recipesKeys.model(v.modelId) });
  };
}

export function useCreateModel() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: ModelInput) =>
      apiRequest<ModelDetailView>('/api/models', { method: 'POST', body: input }),
    onSuccess: async (m) => {
      queryClient.setQueryData(recipesKeys.model(m.id), m);
      await queryClient.invalidateQueries({ queryKey: recipesKeys.lists() });
    },
  });
}

export function useUpdateModel(id: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: ModelInput) =>
      apiRequest<ModelDetailView>(`/api/models/${encodeURIComponent(id)}`, { method: 'PATCH', body: input }),
    onSuccess: async (m) => {
      queryClient.setQueryData(recipesKeys.model(m.id), m);
      await queryClient.invalidateQueries({ queryKey: recipesKeys.lists() });
    },
  });
}

export function useCreateDraft(modelId: string) {
  const changed = useVersionChanged();
  return useMutation({
    mutationFn: (fromRecipeId: string) =>
      apiRequest<RecipeVersionView>(`/api/models/${encodeURIComponent(modelId)}/recipes`, {
        method: 'POST',
        body: { fromRecipeId },
      }),
    onSuccess: changed,
  });
}

export function useSaveDraft(id: string) {
  const changed = useVersionChanged();
  return useMutation({
    mutationFn: (input: { body: Recipe; notes: string | null; revision: number }) =>
      apiRequest<RecipeVersionView>(`/api/recipes/${encodeURIComponent(id)}`, {
        method: 'PATCH',
        body: input,
      }),
    onSuccess: changed,
  });
}

export function useSubmitDraft(id: string) {
  const changed = useVersionChanged();
  return useMutation({
    mutationFn: (input: { reason: string; revision: number }) =>
      apiRequest<RecipeVersionView>(`/api/recipes/${encodeURIComponent(id)}/submit`, {
        method: 'POST',
        body: input,
      }),
    onSuccess: changed,
  });
}

export function useApprove(id: string) {
  const changed = useVersionChanged();
  return useMutation({
    mutationFn: (input: { comment?: string }) =>
      apiRequest<RecipeVersionView>(`/api/recipes/${encodeURIComponent(id)}/approve`, {
        method: 'POST',
        body: input,
      }),
    onSuccess: changed,
  });
}

export function useSendBack(id: string) {
  const changed = useVersionChanged();
  return useMutation({
    mutationFn: (input: { comment: string }) =>
      apiRequest<RecipeVersionView>(`/api/recipes/${encodeURIComponent(id)}/send-back`, {
        method: 'POST',
        body: input,
      }),
    onSuccess: changed,
  });
}

export function useDiscardDraft(id: string) {
  const changed = useVersionChanged();
  return useMutation({
    mutationFn: (input: { reason: string; revision: number }) =>
      apiRequest<RecipeVersionView>(`/api/recipes/${encodeURIComponent(id)}/discard`, {
        method: 'POST',
        body: input,
      }),
    onSuccess: changed,
  });
}
