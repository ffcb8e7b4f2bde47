import { useParams } from 'react-router';
import { PageHeader } from '#src/components/ui/panel';
import { UnitPage } from '#src/features/units/components/unit-page';
import { UnitSearch } from '#src/features/units/components/unit-search';
import { useMe } from '#src/features/auth/api/me';
import { RecomputePanel } from '#src/features/recipes/components/recompute-panel';
import { RawTimings } from '#src/features/quality/components/raw-timings';
import { UnitTimeline } from '#src/features/quality/components/unit-timeline';

export function Component() {
  const { serial = '' } = useParams();
  const { data: me } = useMe();
  return (
    <div>
      <title>{`${serial} · Units · Phasewright`}</title>
      <PageHeader
        title={`Unit ${serial}`}
        actions={
          <div className="w-80">
            <UnitSearch key={serial} />
          </div>
        }
      />
      <UnitPage key={serial} serial={serial} />
      {me?.role === 'engineer' ? (
        <div className="mt-6">
          <RecomputePanel key={serial} serial={serial} />
        </div>
      ) : null}
      {me && ['quality', 'engineer', 'admin'].includes(me.role) ? (
        <>
          <div className="mt-6">
            <UnitTimeline key={serial} serial={serial} />
          </div>
          <div className="mt-6">
            <RawTimings key={serial} serial={serial} />
          </div>
        </>
      ) : null}
    </div>
  );
}
