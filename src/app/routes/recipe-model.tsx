import { useParams } from 'react-router';
import { PageHeader } from '#src/components/ui/panel';
import { useMe } from '#src/features/auth/api/me';
import { ModelDetail } from '#src/features/recipes/components/model-detail';

export function Component() {
  const { modelId = '' } = useParams();
  const { data: me } = useMe();
  if (!me) return null;
  return (
    <div>
      <title>Model · Recipes · Phasewright</title>
      <PageHeader title="Model and its recipe versions" />
      <ModelDetail key={modelId} modelId={modelId} canChange={me.role === 'engineer'} />
    </div>
  );
}
