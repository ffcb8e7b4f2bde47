import { useMemo } from 'react';
import {
  createColumnHelper,
  createSortedRowModel,
  rowSortingFeature,
  sortFn_alphanumeric,
  sortFn_text,
  tableFeatures,
  useTable,
} from '@tanstack/react-table';
import type { CalibrationView } from '#shared/schemas/calibrations';
import { SortableTableContent, TableFrame } from '#src/components/ui/data-table';
import { StatusChip } from '#src/components/ui/status-chip';
import { formatDateTime } from '#src/lib/format';
import {
  PROGRAMMING_TONES,
  failedChecks,
  formatCounts,
} from '#src/components/calibrations/calibration-format';
import { formatOffsetDeg } from '#shared/wording';
import { VerdictMark } from '#src/components/calibrations/verdict-banner';

const features = tableFeatures({
  rowSortingFeature,
  sortedRowModel: createSortedRowModel(),
  sortFns: { alphanumeric: sortFn_alphanumeric, text: sortFn_text },
});

const helper = createColumnHelper<typeof features, CalibrationView>();

const PROGRAMMING_SHORT = { pending: 'Pending', confirmed: 'Confirmed', mismatch: 'Mismatch' } as const;

/** Every calibration of one unit, newest first: verdict, offset, where, with which recipe, when. */
export function CalibrationHistory({ calibrations }: { calibrations: CalibrationView[] }) {
  const columns = useMemo(
    () =>
      helper.columns([
        helper.accessor('computedAt', {
          header: 'Measured',
          sortFn: 'text',
          cell: (info) => <span className="whitespace-nowrap">{formatDateTime(info.getValue())}</span>,
        }),
        helper.accessor('verdict', {
          header: 'Verdict',
          sortFn: 'text',
          cell: (info) => <VerdictMark verdict={info.getValue()} />,
        }),
        helper.accessor((c) => c.offsetDeg ?? -999, {
          id: 'offset',
          header: 'Offset',
          sortFn: 'alphanumeric',
          cell: (info) => (
            <span className="flex flex-col font-mono whitespace-nowrap">
              <span className="text-graphite-50">{formatOffsetDeg(info.row.original.offsetDeg)}</span>
              <span className="text-sm text-graphite-400">
                {formatCounts(info.row.original.offsetCounts)}
              </span>
            </span>
          ),
        }),
        helper.accessor((c) => c.attempt ?? 0, {
          id: 'attempt',
          header: 'Attempt',
          sortFn: 'alphanumeric',
          cell: (info) =>
            info.row.original.purpose === 'recompute'
              ? `Recomputed: ${info.row.original.reason ?? ''}`
              : `${info.row.original.attempt ?? '—'} of ${info.row.original.maxAttempts}`,
        }),
        helper.accessor('stationName', { header: 'Station', sortFn: 'text' }),
        helper.accessor((c) => c.recipe.version, {
          id: 'recipe',
          header: 'Recipe',
          sortFn: 'alphanumeric',
          cell: (info) => `v${info.getValue()}`,
        }),
        helper.accessor((c) => c.programming.status, {
          id: 'programming',
          header: 'Programming',
          sortFn: 'text',
          cell: (info) => (
            <StatusChip tone={PROGRAMMING_TONES[info.getValue()]}>
              {PROGRAMMING_SHORT[info.getValue()]}
            </StatusChip>
          ),
        }),
        helper.display({
          id: 'notes',
          header: 'Failed checks and next action',
          cell: (info) => {
            const c = info.row.original;
            const failed = failedChecks(c);
            return (
              <div className="flex max-w-md flex-col gap-1 text-sm">
                {failed.map((m) => (
                  <span key={m.key} className="flex gap-2 text-graphite-100">
                    <span aria-hidden className="mt-1.5 inline-block size-2 shrink-0 bg-fault" />
                    <span>
                      <span className="font-semibold">{m.name}:</span> {m.message}
                    </span>
                  </span>
                ))}
                <span className="text-graphite-400">{c.nextAction}</span>
              </div>
            );
          },
        }),
        helper.accessor('receivedAt', {
          header: 'Received',
          sortFn: 'text',
          cell: (info) => (
            <span className="text-sm whitespace-nowrap text-graphite-300">
              {formatDateTime(info.getValue())}
              {info.row.original.computeMs !== null ? (
                <span className="block text-graphite-400">
                  computed in {Math.round(info.row.original.computeMs)} ms
                </span>
              ) : null}
            </span>
          ),
        }),
      ]),
    [],
  );

  const table = useTable({
    features,
    columns,
    data: calibrations,
    initialState: { sorting: [{ id: 'computedAt', desc: true }] },
  });

  return (
    <TableFrame caption="Calibrations of this unit, newest first">
      <SortableTableContent
        table={table}
        bodyTestId="calibration-rows"
        empty="This unit has not been measured yet."
      />
    </TableFrame>
  );
}
