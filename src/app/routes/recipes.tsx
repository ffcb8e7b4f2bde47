import { useState } from 'react';
import { useNavigate } from 'react-router';
import { Button } from '#src/components/ui/button';
import { Dialog } from '#src/components/ui/dialog';
import { PageHeader } from '#src/components/ui/panel';
import { useMe } from '#src/features/auth/api/me';
import { ModelForm } from '#src/features/recipes/components/model-form';
import { ModelsList } from '#src/features/recipes/components/models-list';

export function Component() {
  const { data: me } = useMe();
  const navigate = useNavigate();
  const [creating, setCreating] = useState(false);
  if (!me) return null;
  const canChange = me.role === 'engineer';
  return (
    <div>
      <title>Recipes · Phasewright</title>
      <PageHeader
        title="Recipes"
        lead="Motor models and the recipe version each is measured against. Open a model to see its versions, copy one into a draft, and send it for review."
        actions={
          canChange ? (
            <Button variant="primary" onClick={() => setCreating(true)}>
              New model
            </Button>
          ) : null
        }
      />
      <ModelsList />
      <Dialog open={creating} onClose={() => setCreating(false)} title="New motor model">
        {creating ? (
          <ModelForm
            model={null}
            onCancel={() => setCreating(false)}
            onDone={(m) => void navigate(`/recipes/models/${m.id}`)}
          />
        ) : null}
      </Dialog>
    </div>
  );
}
