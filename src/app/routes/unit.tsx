import { useParams } from 'react-router';
import { PageHeader } from '../../components/ui/panel';
import { UnitPage } from '../../features/line/components/unit-page';
import { UnitSearch } from '../../features/line/components/unit-search';

export function Component() {
  const { serial = '' } = useParams();
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
    </div>
  );
}
