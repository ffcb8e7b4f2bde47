import { useId, useState } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import {
  WORK_ORDER_COLUMNS,
  workOrderUploadSchema,
  type ImportReport,
  type WorkOrderUpload,
} from '#shared/schemas/work-orders';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { Panel } from '#src/components/ui/panel';
import { applyServerErrors } from '#src/lib/form-errors';
import { useImportWorkOrder } from '../api/import';

const TEMPLATE = `${WORK_ORDER_COLUMNS.join(',')}\nSN-0001,CV-57B,WO-1001,HB-0001-A,MR-0001-A,ST-0001-A\n`;

/** The CSV reader's messages in plain words (they name a problem with the file's layout). */
export function plainImportMessage(message: string): string {
  if (/too few fields/i.test(message)) return 'This row has fewer columns than the header.';
  if (/too many fields/i.test(message)) return 'This row has more columns than the header.';
  if (/quoted field unterminated|missing quotes/i.test(message))
    return 'A quotation mark is opened and never closed in this row.';
  if (/invalid quotes|trailing quote/i.test(message))
    return 'A quotation mark is in the wrong place in this row.';
  return message.replace(/^serial: /, 'Serial: ');
}

/** Work-order import: all rows or none; each refused row is named with the reason. */
export function WorkOrderImport() {
  const upload = useImportWorkOrder();
  const [report, setReport] = useState<ImportReport | null>(null);
  const [banner, setBanner] = useState<string | null>(null);
  const errorId = useId();
  const templateHref = `data:text/csv;charset=utf-8,${encodeURIComponent(TEMPLATE)}`;
  const form = useForm<WorkOrderUpload>({ resolver: zodResolver(workOrderUploadSchema) });
  const error = form.formState.errors.file?.message;
  const go = form.handleSubmit(async ({ file }) => {
    setReport(null);
    setBanner(null);
    try {
      setReport(await upload.mutateAsync(file));
    } catch (e) {
      setBanner(applyServerErrors(e, form.setError, ['file']));
    }
  });
  return (
    <div className="flex flex-col gap-6">
      <Panel title="Upload a work order">
        <form className="flex max-w-2xl flex-col gap-4" onSubmit={go} noValidate>
          <p className="text-graphite-300">
            A CSV with a header row and the columns{' '}
            <span className="font-mono">{WORK_ORDER_COLUMNS.join(', ')}</span>. Serial and model code are
            required. Every row is imported, or none is: fix the rows named below and upload again.
          </p>
          <a
            href={templateHref}
            download="work-order-template.csv"
            className="inline-flex min-h-target items-center text-copper-200 underline underline-offset-4"
          >
            Download the template (CSV)
          </a>
          <label className="flex flex-col gap-1.5">
            <span className="text-sm font-semibold tracking-wide text-graphite-200 uppercase">
              Work-order file
            </span>
            <input
              type="file"
              accept=".csv,text/csv"
              aria-invalid={error ? true : undefined}
              aria-describedby={error ? errorId : undefined}
              className="min-h-target text-graphite-100 file:mr-3 file:min-h-target file:border-0 file:bg-graphite-800 file:px-4 file:text-graphite-50"
              onChange={(e) => {
                setBanner(null);
                // No file chosen leaves the value empty, which the schema refuses in its own words.
                form.setValue('file', e.target.files?.[0] as File, {
                  shouldValidate: form.formState.isSubmitted,
                });
              }}
            />
          </label>
          {error ? (
            <p id={errorId} role="alert" className="text-sm font-medium text-fault">
              {error}
            </p>
          ) : null}
          <div>
            <Button type="submit" variant="primary" busy={upload.isPending}>
              Import
            </Button>
          </div>
        </form>
      </Panel>
      {banner ? <Alert tone="fault">{banner}</Alert> : null}
      {report && report.errors.length === 0 ? (
        <Alert tone="ok" title="Imported">
          All {report.imported} units of the file were registered.
        </Alert>
      ) : null}
      {report && report.errors.length > 0 ? (
        <Panel title="Nothing was imported">
          <p className="mb-4 text-graphite-200">
            {new Set(report.errors.map((e) => e.row)).size} of {report.rows} rows need fixing; no unit was
            registered.
          </p>
          <TableFrame caption="Rows that need fixing">
            <thead>
              <tr>
                <Th>Row in the file</Th>
                <Th>Serial</Th>
                <Th>What is wrong</Th>
              </tr>
            </thead>
            <tbody>
              {report.errors.map((e, i) => (
                <tr key={i}>
                  <Td className="font-mono">{e.row}</Td>
                  <Td className="font-mono">{e.serial ?? '—'}</Td>
                  <Td>{plainImportMessage(e.message)}</Td>
                </tr>
              ))}
            </tbody>
          </TableFrame>
        </Panel>
      ) : null}
    </div>
  );
}
