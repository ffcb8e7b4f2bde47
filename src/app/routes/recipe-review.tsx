import { useParams } from 'react-router';
import { PageHeader } from '#src/components/ui/panel';
import { useMe } from '#src/features/auth/api/me';
import { useVersion } from '#src/features/recipes/api/recipes';
import { ReviewScreen } from '#src/features/recipes/components/version-page';

export function Component() {
  const { recipeId = '' } = useParams();
  const { data: me } = useMe();
  const version = useVersion(recipeId);
  if (!me) return null;
  const title = version.data
    ? `Review: ${version.data.modelCode} recipe version ${version.data.version}`
    : 'Recipe review';
  return (
    <div>
      <title>{`${title} · Phasewright`}</title>
      <PageHeader
        title={title}
        lead="A controlled change: read the reason and the changes, look at the evidence, then approve or send it back."
      />
      <ReviewScreen key={recipeId} recipeId={recipeId} canChange={me.role === 'engineer'} meId={me.id} />
    </div>
  );
}
