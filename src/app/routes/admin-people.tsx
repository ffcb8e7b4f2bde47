import { PageHeader } from '#src/components/ui/panel';
import { useMe } from '#src/features/auth/api/me';
import { PeopleAdmin } from '#src/features/users/components/people-admin';

export function Component() {
  const { data: me } = useMe();
  if (!me) return null;
  return (
    <div>
      <title>People · Phasewright</title>
      <PageHeader
        title="People"
        lead="Everyone who can sign in to Phasewright: their role, how they sign in, and whether they can right now."
      />
      <PeopleAdmin currentUserId={me.id} />
    </div>
  );
}
