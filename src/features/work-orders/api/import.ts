import { useMutation } from '@tanstack/react-query';
import { importReportSchema, type ImportReport } from '#shared/schemas/work-orders';
import { ApiError } from '#src/lib/api-client';

/** Uploads a work-order CSV; a report with row errors (422) is an answer, not a failure. */
export function useImportWorkOrder() {
  return useMutation({
    mutationFn: async (file: File): Promise<ImportReport> => {
      const form = new FormData();
      form.append('file', file);
      const res = await fetch('/api/units/import', {
        method: 'POST',
        body: form,
        credentials: 'same-origin',
      });
      const body: unknown = await res.json().catch(() => null);
      const report = importReportSchema.safeParse(body);
      if (report.success) return report.data;
      const err = (body as { error?: { code?: string; message?: string } } | null)?.error;
      throw new ApiError(
        res.status,
        err?.code ?? 'http.unexpected',
        err?.message ?? `The server answered ${res.status}.`,
      );
    },
  });
}
