import { Link, useSearchParams } from 'react-router';
import { AuditTrail } from '#src/features/audit/components/audit-trail';
import { useMe } from '#src/features/auth/api/me';
import { PageHeader } from '#src/components/ui/panel';
import { ContainmentSearch } from '#src/features/quality/components/containment-search';
import { HeldUnits } from '#src/features/quality/components/held-units';
import { Investigations } from '#src/features/quality/components/investigations';

const VIEWS = [
  { id: 'held', label: 'Held units' },
  { id: 'search', label: 'Containment search' },
  { id: 'investigations', label: 'Investigations' },
  { id: 'audit', label: 'Audit trail' },
] as const;

/** Quality's workspace: units on hold (the first view), containment search, and investigations. */
export function Component() {
  const [params] = useSearchParams();
  const { data: me } = useMe();
  // Engineers share the workspace; the audit trail is quality's (and administrators').
  const views = VIEWS.filter((v) => v.id !== 'audit' || me?.role === 'quality' || me?.role === 'admin');
  const view = views.find((v) => v.id === params.get('view'))?.id ?? 'held';
  return (
    <div>
      <title>{`${VIEWS.find((v) => v.id === view)!.label} · Quality · Phasewright`}</title>
      <PageHeader
        title="Quality"
        lead="Contain suspect units: find them, hold them under an investigation, and release each with a disposition."
      />
      <nav aria-label="Quality views" className="mb-6 flex flex-wrap gap-2 border-b border-graphite-700">
        {views.map((v) => (
          <Link
            key={v.id}
            to={`/quality?view=${v.id}`}
            aria-current={v.id === view ? 'page' : undefined}
            className={`inline-flex min-h-target items-center border-b-4 px-4 font-semibold no-underline ${
              v.id === view
                ? 'border-copper-400 text-graphite-50'
                : 'border-transparent text-graphite-300 hover:text-copper-200'
            }`}
          >
            {v.label}
          </Link>
        ))}
      </nav>
      {view === 'held' ? <HeldUnits /> : null}
      {view === 'search' ? <ContainmentSearch /> : null}
      {view === 'investigations' ? <Investigations /> : null}
      {view === 'audit' ? <AuditTrail /> : null}
    </div>
  );
}
