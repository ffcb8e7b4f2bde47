import { useParams } from 'react-router';
import { PageHeader } from '#src/components/ui/panel';
import { useMe } from '#src/features/auth/api/me';
import { useVersion } from '#src/features/recipes/api/recipes';
import { VersionPage } from '#src/features/recipes/components/version-page';

export function Component() {
  const { recipeId = '' } = useParams();
  const { data: me } = useMe();
  const version = useVersion(recipeId);
  if (!me) return null;
  const title = version.data
    ? `${version.data.modelCode} recipe version ${version.data.version}`
    : 'Recipe version';
  return (
    <div>
      <title>{`${title} · Phasewright`}</title>
      <PageHeader title={title} />
      <VersionPage key={recipeId} recipeId={recipeId} canChange={me.role === 'engineer'} meId={me.id} />
    </div>
  );
}
