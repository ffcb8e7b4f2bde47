import { Link } from 'react-router';
import { ROLE_LABELS, roleAllows, type Role } from '#shared/schemas/roles';
import { Panel, PageHeader } from '#src/components/ui/panel';
import { useMe } from '#src/features/auth/api/me';
import { UnitSearch } from '#src/features/units/components/unit-search';
import { HealthSummary } from '#src/features/system/components/health-view';
import { AlertSubscriptionToggle, OpenAlerts } from '#src/features/alerts/components/open-alerts';
import { NAV_ITEMS } from '../navigation';

const ROLE_DUTIES: Record<Role, string> = {
  operator: 'You run units through the calibration station and send them on with their traveler.',
  engineer: 'You own the recipes and limits and watch how the line is doing.',
  quality: 'You trace units, review results and decide on holds.',
  admin: 'You manage who can use Phasewright and keep an eye on the system.',
};

export function Component() {
  const { data: me } = useMe();
  if (!me) return null;
  const areas = NAV_ITEMS.filter((item) => item.to !== '/' && roleAllows(item.access, me.role));

  return (
    <div className="flex flex-col gap-8">
      <title>Overview · Phasewright</title>
      <PageHeader title={`Hello, ${me.displayName}`} lead={ROLE_DUTIES[me.role]} />
      <div className="grid gap-6 lg:grid-cols-2">
        <Panel title="Your account" titleId="account-title">
          <dl className="grid grid-cols-[auto_1fr] gap-x-6 gap-y-3 text-lg">
            <dt className="text-graphite-400">Name</dt>
            <dd className="font-semibold">{me.displayName}</dd>
            <dt className="text-graphite-400">User name</dt>
            <dd className="font-mono">{me.username}</dd>
            <dt className="text-graphite-400">Role</dt>
            <dd data-testid="home-role">{ROLE_LABELS[me.role]}</dd>
            <dt className="text-graphite-400">E-mail</dt>
            <dd>{me.email ?? <span className="text-graphite-400">none on file</span>}</dd>
          </dl>
        </Panel>
        <Panel title="System" titleId="system-title">
          <HealthSummary />
        </Panel>
        <Panel title="Find a unit" titleId="find-unit-title">
          <UnitSearch />
        </Panel>
        {roleAllows(['engineer', 'quality'], me.role) ? (
          <Panel title="Chart alerts" titleId="alerts-title" className="lg:col-span-2">
            <div className="flex flex-col gap-4">
              <OpenAlerts canAcknowledge={roleAllows(['engineer'], me.role)} />
              <AlertSubscriptionToggle />
            </div>
          </Panel>
        ) : null}
      </div>
      {areas.length > 0 ? (
        <section aria-labelledby="areas-title" className="flex flex-col gap-4">
          <h2 id="areas-title" className="text-2xl font-semibold">
            Your areas
          </h2>
          <ul className="grid gap-4 sm:grid-cols-2 xl:grid-cols-4">
            {areas.map((area) => (
              <li key={area.to}>
                <Link
                  to={area.to}
                  className="chamfer chamfer-lg group flex h-full min-h-32 flex-col gap-2 p-5 text-graphite-100 no-underline hover:[--ch-edge:var(--color-copper-400)] hover:text-graphite-50"
                >
                  <span className="flex items-center justify-between text-xl font-semibold text-graphite-50">
                    {area.label}
                    <svg
                      width="20"
                      height="20"
                      viewBox="0 0 20 20"
                      aria-hidden
                      className="text-copper-300 transition-transform group-hover:translate-x-1"
                    >
                      <path d="M3 10h12M10 4l6 6-6 6" fill="none" stroke="currentColor" strokeWidth="2.5" />
                    </svg>
                  </span>
                  <span className="text-graphite-300">{area.summary}</span>
                </Link>
              </li>
            ))}
          </ul>
        </section>
      ) : null}
    </div>
  );
}
