import { useMemo, useState, type ReactNode } from 'react';
import {
  columnFilteringFeature,
  createColumnHelper,
  createFilteredRowModel,
  createSortedRowModel,
  filterFn_equalsString,
  globalFilteringFeature,
  rowSortingFeature,
  sortFn_alphanumeric,
  sortFn_text,
  tableFeatures,
  useTable,
  type FilterFn,
} from '@tanstack/react-table';
import { ROLE_LABELS, ROLES } from '#shared/schemas/roles';
import type { UserRow } from '#shared/schemas/users';
import { Button } from '#src/components/ui/button';
import { SortableTableContent, TableFrame } from '#src/components/ui/data-table';
import { SelectField, TextField } from '#src/components/ui/field';
import { StatusChip } from '#src/components/ui/status-chip';
import { formatDateTime, formatRelative } from '#src/lib/format';
import { accountStatus, STATUS_LABELS, STATUS_TONES, type AccountStatus } from './account-status';

const features = tableFeatures({
  rowSortingFeature,
  columnFilteringFeature,
  globalFilteringFeature,
  filteredRowModel: createFilteredRowModel(),
  sortedRowModel: createSortedRowModel(),
  sortFns: { alphanumeric: sortFn_alphanumeric, text: sortFn_text },
  filterFns: { equalsString: filterFn_equalsString },
});

const helper = createColumnHelper<typeof features, UserRow>();

/** The search box looks at everything that identifies a person, whichever column shows it. */
const matchesPerson: FilterFn<typeof features, UserRow> = (row, _columnId, value) => {
  const needle = String(value ?? '')
    .trim()
    .toLowerCase();
  if (!needle) return true;
  const u = row.original;
  return [u.displayName, u.username, u.email, u.badgeCode, ROLE_LABELS[u.role]].some((v) =>
    v?.toLowerCase().includes(needle),
  );
};

type PeopleTableProps = {
  users: UserRow[];
  currentUserId: string;
  onEdit: (user: UserRow) => void;
  onUnlock: (user: UserRow) => void;
  unlockingId: string | null;
  /** Sits at the end of the filter row. */
  addButton?: ReactNode;
};

const ALL = '';

export function PeopleTable({
  users,
  currentUserId,
  onEdit,
  onUnlock,
  unlockingId,
  addButton,
}: PeopleTableProps) {
  const [globalFilter, setGlobalFilter] = useState('');

  const columns = useMemo(
    () =>
      helper.columns([
        helper.accessor('displayName', {
          id: 'person',
          header: 'Person',
          sortFn: 'text',
          cell: (info) => {
            const u = info.row.original;
            return (
              <div className="flex flex-col">
                <span className="font-semibold text-graphite-50">
                  {u.displayName}
                  {u.id === currentUserId ? (
                    <span className="ml-2 text-sm font-normal text-copper-200">(you)</span>
                  ) : null}
                </span>
                <span className="font-mono text-sm text-graphite-400">{u.username}</span>
              </div>
            );
          },
        }),
        helper.accessor('role', {
          header: 'Role',
          sortFn: 'text',
          filterFn: 'equalsString',
          cell: (info) => ROLE_LABELS[info.getValue()],
        }),
        helper.accessor((u) => accountStatus(u), {
          id: 'status',
          header: 'Status',
          sortFn: 'text',
          filterFn: 'equalsString',
          cell: (info) => {
            const u = info.row.original;
            const status = info.getValue() as AccountStatus;
            return (
              <div className="flex flex-col items-start gap-1">
                <StatusChip tone={STATUS_TONES[status]}>{STATUS_LABELS[status]}</StatusChip>
                {status === 'locked' ? (
                  <span className="text-sm text-graphite-400">until {formatDateTime(u.lockedUntil)}</span>
                ) : null}
                {status !== 'locked' && u.failedAttempts > 0 ? (
                  <span className="text-sm text-warn">
                    {u.failedAttempts} failed {u.failedAttempts === 1 ? 'attempt' : 'attempts'}
                  </span>
                ) : null}
              </div>
            );
          },
        }),
        helper.accessor((u) => u.email ?? '', {
          id: 'email',
          header: 'E-mail',
          sortFn: 'text',
          cell: (info) => info.getValue() || <span className="text-graphite-400">—</span>,
        }),
        helper.display({
          id: 'signIn',
          header: 'Signs in with',
          cell: (info) => {
            const u = info.row.original;
            const ways: string[] = [];
            if (u.hasPassword) ways.push('Password');
            if (u.badgeCode) ways.push(`Badge ${u.badgeCode}${u.hasPin ? ' + PIN' : ' (no PIN)'}`);
            return ways.length ? (
              <ul className="text-graphite-200">
                {ways.map((w) => (
                  <li key={w}>{w}</li>
                ))}
              </ul>
            ) : (
              <span className="text-graphite-400">Not set up yet</span>
            );
          },
        }),
        helper.accessor((u) => u.lastSignInAt ?? '', {
          id: 'lastSignIn',
          header: 'Last sign-in',
          sortFn: 'text',
          cell: (info) => {
            const at = info.row.original.lastSignInAt;
            return at ? (
              <span title={formatDateTime(at)}>{formatRelative(at)}</span>
            ) : (
              <span className="text-graphite-400">never</span>
            );
          },
        }),
        helper.display({
          id: 'actions',
          header: () => <span className="sr-only">Actions</span>,
          cell: (info) => {
            const u = info.row.original;
            return (
              <div className="flex justify-end gap-2">
                {accountStatus(u) === 'locked' ? (
                  <Button
                    onClick={() => onUnlock(u)}
                    busy={unlockingId === u.id}
                    aria-label={`Unlock ${u.displayName}`}
                  >
                    Unlock
                  </Button>
                ) : null}
                <Button onClick={() => onEdit(u)} aria-label={`Change ${u.displayName}`}>
                  Change…
                </Button>
              </div>
            );
          },
        }),
      ]),
    [currentUserId, onEdit, onUnlock, unlockingId],
  );

  const table = useTable({
    features,
    columns,
    data: users,
    state: { globalFilter },
    onGlobalFilterChange: setGlobalFilter,
    globalFilterFn: matchesPerson,
    getColumnCanGlobalFilter: (column) => column.id === 'person',
    initialState: { sorting: [{ id: 'person', desc: false }] },
  });

  const roleFilter = (table.getColumn('role')?.getFilterValue() as string | undefined) ?? ALL;
  const statusFilter = (table.getColumn('status')?.getFilterValue() as string | undefined) ?? ALL;
  const rows = table.getRowModel().rows;

  return (
    <div className="flex flex-col gap-4">
      <div className="grid items-end gap-4 sm:grid-cols-2 lg:grid-cols-[minmax(0,2fr)_minmax(0,1fr)_minmax(0,1fr)_auto]">
        <TextField
          label="Search people"
          type="search"
          placeholder="Name, user name, e-mail or badge"
          value={globalFilter}
          onChange={(event) => setGlobalFilter(event.target.value)}
        />
        <SelectField
          label="Role"
          value={roleFilter}
          onChange={(event) => table.getColumn('role')?.setFilterValue(event.target.value || undefined)}
          options={[
            { value: ALL, label: 'All roles' },
            ...ROLES.map((r) => ({ value: r, label: ROLE_LABELS[r] })),
          ]}
        />
        <SelectField
          label="Status"
          value={statusFilter}
          onChange={(event) => table.getColumn('status')?.setFilterValue(event.target.value || undefined)}
          options={[
            { value: ALL, label: 'Any status' },
            ...(Object.keys(STATUS_LABELS) as AccountStatus[]).map((s) => ({
              value: s,
              label: STATUS_LABELS[s],
            })),
          ]}
        />
        {addButton ? <div className="flex justify-end">{addButton}</div> : null}
      </div>
      <p className="text-graphite-400" aria-live="polite">
        {rows.length === users.length
          ? `${users.length} people`
          : `${rows.length} of ${users.length} people match`}
      </p>
      <TableFrame caption="People with a Phasewright account">
        <SortableTableContent table={table} bodyTestId="people-rows" empty="Nobody matches these filters." />
      </TableFrame>
    </div>
  );
}
