import { useLocation } from 'react-router';
import { LinkButton } from '#src/components/ui/button';
import { Panel } from '#src/components/ui/panel';

export function Component() {
  const { pathname } = useLocation();
  return (
    <div className="mx-auto flex max-w-2xl flex-col gap-4 py-8" data-testid="not-found">
      <title>Not found · Phasewright</title>
      <Panel>
        <p className="mb-2 text-sm font-semibold tracking-widest text-graphite-400 uppercase">
          Error 404 · no such page
        </p>
        <h1 className="mb-3 text-3xl font-bold text-graphite-50">Nothing lives at this address</h1>
        <p className="mb-2 text-lg text-graphite-300">
          <span className="font-mono break-all text-copper-200">{pathname}</span> is not a Phasewright page.
        </p>
        <p className="mb-6 text-lg text-graphite-300">Check the link, or use the navigation above.</p>
        <LinkButton to="/" variant="primary">
          Back to the overview
        </LinkButton>
      </Panel>
    </div>
  );
}
