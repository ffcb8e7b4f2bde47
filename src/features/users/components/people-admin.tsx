import { useCallback, useState } from 'react';
import type { UserRow } from '#shared/schemas/users';
import { Alert, Loading } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { useUnlockUser, useUsers } from '../api/users';
import { CreateUserDialog } from './create-user-dialog';
import { EditUserDialog } from './edit-user-dialog';
import { PeopleTable } from './people-table';

/** The People screen's working part: the table, its dialogs and their outcome messages. */
export function PeopleAdmin({ currentUserId }: { currentUserId: string }) {
  const users = useUsers();
  const unlock = useUnlockUser();
  const [creating, setCreating] = useState(false);
  // The dialog follows the cached row, so an unlock inside it shows at once.
  const [editingId, setEditingId] = useState<string | null>(null);
  const editing = users.data?.find((u) => u.id === editingId) ?? null;
  const [notice, setNotice] = useState<{ tone: 'ok' | 'fault'; title: string; body: string } | null>(null);

  const onEdit = useCallback((user: UserRow) => {
    setNotice(null);
    setEditingId(user.id);
  }, []);
  const { mutate: unlockUser } = unlock;
  const onUnlock = useCallback(
    (user: UserRow) =>
      unlockUser(user.id, {
        onSuccess: (u) =>
          setNotice({ tone: 'ok', title: 'Unlocked', body: `${u.displayName} can sign in again.` }),
        onError: (error) => setNotice({ tone: 'fault', title: 'Not unlocked', body: error.message }),
      }),
    [unlockUser],
  );

  return (
    <div className="flex flex-col gap-5">
      {notice ? (
        <Alert tone={notice.tone} title={notice.title}>
          {notice.body}
        </Alert>
      ) : null}
      {users.isPending ? <Loading label="Fetching accounts…" /> : null}
      {users.isError ? (
        <Alert tone="fault" title="Accounts could not be read">
          {users.error.message}
        </Alert>
      ) : null}
      {users.isSuccess ? (
        <PeopleTable
          users={users.data}
          currentUserId={currentUserId}
          onEdit={onEdit}
          onUnlock={onUnlock}
          unlockingId={unlock.isPending ? (unlock.variables ?? null) : null}
          addButton={
            <Button variant="primary" size="lg" onClick={() => setCreating(true)}>
              Add a person
            </Button>
          }
        />
      ) : null}
      <CreateUserDialog
        open={creating}
        onClose={() => setCreating(false)}
        onCreated={(user, invited) => {
          setCreating(false);
          setNotice({
            tone: 'ok',
            title: 'Account created',
            body: invited
              ? `${user.displayName} has been invited by e-mail; the message is in the Outbox.`
              : `${user.displayName} can sign in now.`,
          });
        }}
      />
      <EditUserDialog
        user={editing}
        currentUserId={currentUserId}
        onClose={() => setEditingId(null)}
        onSaved={(message) => {
          setEditingId(null);
          setNotice({ tone: 'ok', title: 'Saved', body: message });
        }}
      />
    </div>
  );
}
