import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { apiErrorSchema } from '#shared/schemas/auth';
import { attachmentSchema, type Attachment } from '#shared/schemas/attachments';
import { ApiError, apiRequest } from '#src/lib/api-client';
import { qualityKeys } from './quality';

const base = (caseId: string) => `/api/quality/investigations/${encodeURIComponent(caseId)}/attachments`;
const attachmentsKey = (caseId: string) => [...qualityKeys.detail(caseId), 'attachments'] as const;

/** Where the browser downloads an attachment (the answer names the file and carries its SHA-256). */
export const attachmentHref = (caseId: string, id: string) => `${base(caseId)}/${encodeURIComponent(id)}`;

export function useAttachments(caseId: string) {
  return useQuery({
    queryKey: attachmentsKey(caseId),
    queryFn: () => apiRequest<{ attachments: Attachment[] }>(base(caseId)).then((b) => b.attachments),
  });
}

/** Uploads one file as multipart form data; the server's refusal (413, 415, 409) comes back as an ApiError. */
export function useAddAttachment(caseId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: async (file: File): Promise<Attachment> => {
      const form = new FormData();
      form.append('file', file);
      let res: Response;
      try {
        res = await fetch(base(caseId), { method: 'POST', body: form, credentials: 'same-origin' });
      } catch {
        throw new ApiError(0, 'network.unreachable', 'The Phasewright server cannot be reached. Try again.');
      }
      const body: unknown = await res.json().catch(() => null);
      if (res.ok) return attachmentSchema.parse(body);
      const err = apiErrorSchema.safeParse(body);
      throw new ApiError(
        res.status,
        err.success ? err.data.error.code : 'http.unexpected',
        err.success ? err.data.error.message : `The server answered ${res.status}.`,
      );
    },
    onSuccess: () => qc.invalidateQueries({ queryKey: attachmentsKey(caseId) }),
  });
}

export function useRemoveAttachment(caseId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, reason }: { id: string; reason: string }) =>
      apiRequest<void>(`${attachmentHref(caseId, id)}/remove`, { method: 'POST', body: { reason } }),
    onSuccess: () => qc.invalidateQueries({ queryKey: attachmentsKey(caseId) }),
  });
}
