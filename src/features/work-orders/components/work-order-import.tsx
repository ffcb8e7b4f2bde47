import { useState } from 'react';
import { WORK_ORDER_COLUMNS, type ImportReport } from '#shared/schemas/work-orders';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { Panel } from '#src/components/ui/panel';
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
  const [file, setFile] = useState<File | null>(null);
  const [report, setReport] = useState<ImportReport | null>(null);
  const templateHref = `data:text/csv;charset=utf-8,${encodeURIComponent(TEMPLATE)}`;
  const go = async () => {
    if (!file) return;
    setReport(null);
    try {
      setReport(await upload.mutateAsync(file));
    } catch {
      // shown from upload.error
    }
  };
  return (
    <div className="flex flex-col gap-6">
      <Panel title="Upload a work order">
        <div className="flex max-w-2xl flex-col gap-4">
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
              className="min-h-target text-graphite-100 file:mr-3 file:min-h-target file:border-0 file:bg-graphite-800 file:px-4 file:text-graphite-50"
              onChange={(e) => setFile(e.target.files?.[0] ?? null)}
            />
          </label>
          <div>
            <Button variant="primary" disabled={!file} busy={upload.isPending} onClick={() => void go()}>
              Import
            </Button>
          </div>
        </div>
      </Panel>
      {upload.isError ? <Alert tone="fault">{upload.error.message}</Alert> : null}
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
