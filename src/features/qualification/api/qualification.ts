import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type {
  CertifyReferenceUnit,
  GaugeStudyCreate,
  PlantShifts,
  GaugeStudyDetail,
  GaugeStudySummary,
  StudyNextStep,
  QualificationPolicy,
  QualificationRunView,
  QualificationState,
  ReferenceUnitView,
} from '#shared/schemas/qualification';
import { apiRequest } from '#src/lib/api-client';

const enc = encodeURIComponent;

/** Query keys of station qualification; nobody writes these inline. */
export const qualificationKeys = {
  all: ['qualification'] as const,
  states: () => [...qualificationKeys.all, 'state'] as const,
  state: (stationId: string) => [...qualificationKeys.states(), stationId] as const,
  readings: (stationId: string) => [...qualificationKeys.all, 'readings', stationId] as const,
  policy: (stationId: string) => [...qualificationKeys.all, 'policy', stationId] as const,
  references: () => [...qualificationKeys.all, 'references'] as const,
  referenceReadings: (refId: string, stationId: string) =>
    [...qualificationKeys.all, 'reference-readings', refId, stationId] as const,
  shifts: () => [...qualificationKeys.all, 'shifts'] as const,
};

/** Stations by name, for choosing whose bias to show (only id and name are read). */
export function useStationChoices() {
  return useQuery({
    queryKey: [...qualificationKeys.all, 'stations'] as const,
    queryFn: () =>
      apiRequest<{ stations: { id: string; name: string }[] }>('/api/stations').then((b) =>
        b.stations.map((s) => ({ id: s.id, name: s.name })),
      ),
  });
}

export function useShifts() {
  return useQuery({
    queryKey: qualificationKeys.shifts(),
    queryFn: () => apiRequest<PlantShifts & { timeZone: string }>('/api/qualification/shifts'),
  });
}

export function useSetShifts() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: PlantShifts) =>
      apiRequest<PlantShifts & { timeZone: string }>('/api/qualification/shifts', {
        method: 'PUT',
        body: input,
      }),
    onSuccess: (saved) => {
      queryClient.setQueryData(qualificationKeys.shifts(), saved);
      // Shift starts move every station's "qualified until".
      void queryClient.invalidateQueries({ queryKey: qualificationKeys.states() });
    },
  });
}

export function useReferenceReadings(refId: string, stationId: string | null) {
  return useQuery({
    queryKey: qualificationKeys.referenceReadings(refId, stationId ?? ''),
    queryFn: () =>
      apiRequest<{ readings: QualificationRunView[] }>(
        `/api/qualification/reference-units/${enc(refId)}/readings?stationId=${enc(stationId!)}`,
      ).then((b) => b.readings),
    enabled: stationId !== null,
  });
}

export function useCertifyReference() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ refId, input }: { refId: string; input: CertifyReferenceUnit }) =>
      apiRequest<{ referenceUnit: ReferenceUnitView }>(
        `/api/qualification/reference-units/${enc(refId)}/certify`,
        { method: 'POST', body: input },
      ),
    onSuccess: () => {
      void queryClient.invalidateQueries({ queryKey: qualificationKeys.references() });
      void queryClient.invalidateQueries({ queryKey: qualificationKeys.states() });
    },
  });
}

export const stationQualificationQueryOptions = (stationId: string) =>
  queryOptions({
    queryKey: qualificationKeys.state(stationId),
    queryFn: () => apiRequest<QualificationState>(`/api/stations/${enc(stationId)}/qualification`),
    // Readings of reference units arrive from the rig, not from this screen: look again often.
    refetchInterval: 5_000,
  });

export function useStationQualification(stationId: string) {
  return useQuery(stationQualificationQueryOptions(stationId));
}

export function useStationReadings(stationId: string | null) {
  return useQuery({
    queryKey: qualificationKeys.readings(stationId ?? ''),
    queryFn: () =>
      apiRequest<{ readings: QualificationRunView[] }>(
        `/api/stations/${enc(stationId!)}/qualification/readings?limit=200`,
      ).then((b) => b.readings),
    enabled: stationId !== null,
    refetchInterval: 30_000,
  });
}

export function useStationPolicy(stationId: string | null) {
  return useQuery({
    queryKey: qualificationKeys.policy(stationId ?? ''),
    queryFn: () =>
      apiRequest<{ policy: QualificationPolicy | null }>(
        `/api/stations/${enc(stationId!)}/qualification/policy`,
      ).then((b) => b.policy),
    enabled: stationId !== null,
  });
}

export function useReferenceUnits() {
  return useQuery({
    queryKey: qualificationKeys.references(),
    queryFn: () =>
      apiRequest<{ referenceUnits: ReferenceUnitView[] }>('/api/qualification/reference-units').then(
        (b) => b.referenceUnits,
      ),
  });
}

export function useLiftLock() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ stationId, reason, minutes }: { stationId: string; reason: string; minutes: number }) =>
      apiRequest<{ override: { expiresAt: string } }>(
        `/api/stations/${enc(stationId)}/qualification/override`,
        {
          method: 'POST',
          body: { reason, minutes },
        },
      ),
    onSuccess: (_b, v) => queryClient.invalidateQueries({ queryKey: qualificationKeys.state(v.stationId) }),
  });
}

export function useSetPolicy() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ stationId, policy }: { stationId: string; policy: QualificationPolicy }) =>
      apiRequest<{ policy: QualificationPolicy }>(`/api/stations/${enc(stationId)}/qualification/policy`, {
        method: 'PUT',
        body: policy,
      }),
    onSuccess: (_b, v) => {
      void queryClient.invalidateQueries({ queryKey: qualificationKeys.policy(v.stationId) });
      void queryClient.invalidateQueries({ queryKey: qualificationKeys.state(v.stationId) });
    },
  });
}

export function useCreateReferenceUnit() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: { serial: string; certifiedOffsetDeg?: number; toleranceDeg: number }) =>
      apiRequest<{ referenceUnit: ReferenceUnitView }>('/api/qualification/reference-units', {
        method: 'POST',
        body: input,
      }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: qualificationKeys.references() }),
  });
}

export const studyKeys = {
  all: ['gauge-studies'] as const,
  lists: () => [...studyKeys.all, 'list'] as const,
  details: () => [...studyKeys.all, 'detail'] as const,
  detail: (id: string) => [...studyKeys.details(), id] as const,
  next: (stationId: string) => [...studyKeys.all, 'next', stationId] as const,
};

export function useStudies() {
  return useQuery({
    queryKey: studyKeys.lists(),
    queryFn: () => apiRequest<{ studies: GaugeStudySummary[] }>('/api/gauge-studies').then((b) => b.studies),
  });
}

export function useStudy(id: string | null) {
  return useQuery({
    queryKey: studyKeys.detail(id ?? ''),
    queryFn: () =>
      apiRequest<{ study: GaugeStudyDetail }>(`/api/gauge-studies/${enc(id!)}`).then((b) => b.study),
    enabled: id !== null,
    refetchInterval: (q) => (q.state.data?.status === 'open' ? 10_000 : false),
  });
}

export function useStudyNextSteps(stationId: string) {
  return useQuery({
    queryKey: studyKeys.next(stationId),
    queryFn: () =>
      apiRequest<{ steps: StudyNextStep[] }>(`/api/stations/${enc(stationId)}/gauge-studies/next`).then(
        (b) => b.steps,
      ),
    refetchInterval: 5_000,
  });
}

export function useModelChoices() {
  return useQuery({
    queryKey: [...studyKeys.all, 'models'] as const,
    queryFn: () =>
      apiRequest<{ models: { id: string; code: string }[] }>('/api/models').then((b) =>
        b.models.map((m) => ({ id: m.id, code: m.code })),
      ),
  });
}

export function useOperatorChoices(enabled: boolean) {
  return useQuery({
    queryKey: [...studyKeys.all, 'operators'] as const,
    queryFn: () =>
      apiRequest<{ operators: { id: string; name: string }[] }>('/api/gauge-studies/operators').then(
        (b) => b.operators,
      ),
    enabled,
  });
}

export function useCreateStudy() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: GaugeStudyCreate) =>
      apiRequest<{ study: GaugeStudyDetail }>('/api/gauge-studies', { method: 'POST', body: input }).then(
        (b) => b.study,
      ),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: studyKeys.lists() }),
  });
}
