import { Link } from 'react-router';
import { PageHeader } from '#src/components/ui/panel';
import { useMe } from '#src/features/auth/api/me';
import { ShiftsEditor } from '#src/features/qualification/components/shifts-editor';

export function Component() {
  const me = useMe();
  return (
    <div>
      <title>Plant shifts · Phasewright</title>
      <PageHeader
        title="Plant shifts"
        lead="When each shift starts. A station asked to qualify at every shift start must read its reference unit after each of these times before it calibrates production units."
        actions={
          <Link to="/qualification" className="inline-flex min-h-target items-center px-2 font-semibold">
            Station qualification
          </Link>
        }
      />
      <ShiftsEditor canEdit={me.data?.role === 'engineer'} />
    </div>
  );
}
