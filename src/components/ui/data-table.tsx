import type { ReactNode, ThHTMLAttributes, TdHTMLAttributes } from 'react';
import { FlexRender, type RowData, type Table, type TableFeatures } from '@tanstack/react-table';

/** What a sortable column offers (present whenever the table has the row-sorting feature). */
interface SortableColumn {
  getIsSorted(): SortState;
  getCanSort(): boolean;
  toggleSorting(): void;
}

/** Table markup shared by every list: dense enough for admins, rows tall enough for a finger. */
export function TableFrame({ caption, children }: { caption: string; children: ReactNode }) {
  return (
    <div className="overflow-x-auto border border-graphite-700 bg-graphite-900">
      <table className="w-full border-collapse text-left">
        <caption className="sr-only">{caption}</caption>
        {children}
      </table>
    </div>
  );
}

export function Th({ className = '', ...rest }: ThHTMLAttributes<HTMLTableCellElement>) {
  return (
    <th
      scope="col"
      className={`border-b-2 border-copper-700 bg-graphite-850 px-3 py-2 text-sm font-semibold tracking-wider whitespace-nowrap text-graphite-300 uppercase ${className}`}
      {...rest}
    />
  );
}

export function Td({ className = '', ...rest }: TdHTMLAttributes<HTMLTableCellElement>) {
  return <td className={`border-b border-graphite-750 px-3 py-2.5 align-middle ${className}`} {...rest} />;
}

type SortState = false | 'asc' | 'desc';

/** A column header that sorts: a real button, with the direction in words for screen readers. */
export function SortButton({
  label,
  sorted,
  onToggle,
}: {
  label: ReactNode;
  sorted: SortState;
  onToggle: () => void;
}) {
  return (
    <button
      type="button"
      onClick={onToggle}
      className="-mx-2 inline-flex min-h-target items-center gap-2 px-2 uppercase hover:text-copper-200"
    >
      {label}
      <svg width="10" height="14" viewBox="0 0 10 14" aria-hidden className="shrink-0">
        <path
          d="M5 0 10 5H0Z"
          fill={sorted === 'asc' ? 'var(--color-copper-300)' : 'var(--color-graphite-600)'}
        />
        <path
          d="M5 14 0 9h10Z"
          fill={sorted === 'desc' ? 'var(--color-copper-300)' : 'var(--color-graphite-600)'}
        />
      </svg>
      <span className="sr-only">
        {sorted === 'asc' ? '(sorted ascending)' : sorted === 'desc' ? '(sorted descending)' : '(not sorted)'}
      </span>
    </button>
  );
}

/**
 * Header row and body of a sortable TanStack table in the product's table markup: sortable columns get
 * a SortButton and aria-sort; an empty table shows `empty` across all columns.
 */
export function SortableTableContent<TFeatures extends TableFeatures, TData extends RowData>({
  table,
  bodyTestId,
  empty,
}: {
  table: Pick<Table<TFeatures, TData>, 'getHeaderGroups' | 'getRowModel' | 'getAllLeafColumns'>;
  bodyTestId?: string;
  empty: ReactNode;
}) {
  const rows = table.getRowModel().rows;
  return (
    <>
      <thead>
        {table.getHeaderGroups().map((group) => (
          <tr key={group.id}>
            {group.headers.map((header) => {
              const column = header.column as unknown as SortableColumn;
              const sorted = column.getIsSorted();
              return (
                <Th
                  key={header.id}
                  aria-sort={sorted === 'asc' ? 'ascending' : sorted === 'desc' ? 'descending' : undefined}
                >
                  {header.isPlaceholder ? null : column.getCanSort() ? (
                    <SortButton
                      label={<FlexRender header={header} />}
                      sorted={sorted}
                      onToggle={() => column.toggleSorting()}
                    />
                  ) : (
                    <FlexRender header={header} />
                  )}
                </Th>
              );
            })}
          </tr>
        ))}
      </thead>
      <tbody data-testid={bodyTestId}>
        {rows.map((row) => (
          <tr key={row.id} className="hover:bg-graphite-850">
            {row.getAllCells().map((cell) => (
              <Td key={cell.id}>
                <FlexRender cell={cell} />
              </Td>
            ))}
          </tr>
        ))}
        {rows.length === 0 ? (
          <tr>
            <Td colSpan={table.getAllLeafColumns().length} className="py-8 text-center text-graphite-400">
              {empty}
            </Td>
          </tr>
        ) : null}
      </tbody>
    </>
  );
}
