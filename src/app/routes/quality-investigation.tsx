import { Link, useParams } from 'react-router';
import { PageHeader } from '#src/components/ui/panel';
import { useInvestigation } from '#src/features/quality/api/quality';
import { InvestigationPage } from '#src/features/quality/components/investigation-page';

export function Component() {
  const { id = '' } = useParams();
  const inv = useInvestigation(id);
  const heading = inv.data ? `${inv.data.reference} · ${inv.data.title}` : 'Investigation';
  return (
    <div>
      <title>{`${heading} · Quality · Phasewright`}</title>
      <PageHeader
        title={heading}
        actions={
          <Link to="/quality?view=investigations" className="inline-flex min-h-target items-center">
            All investigations
          </Link>
        }
      />
      <InvestigationPage id={id} />
    </div>
  );
}
