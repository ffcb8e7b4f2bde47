import { LinkButton } from '#src/components/ui/button';
import { Panel } from '#src/components/ui/panel';

/** What a signed-in person sees on a screen their role does not open. */
export function NotAllowed() {
  return (
    <div className="mx-auto flex max-w-2xl flex-col gap-4 py-8" data-testid="not-allowed">
      <title>Not allowed · Phasewright</title>
      <Panel className="[--ch-edge:var(--color-warn)]">
        <p className="mb-2 flex items-center gap-2 text-sm font-semibold tracking-widest text-warn uppercase">
          <svg width="14" height="14" viewBox="0 0 12 12" aria-hidden>
            <path d="M6 0.8 11.4 11H0.6Z" fill="currentColor" />
          </svg>
          Not allowed
        </p>
        <h1 className="mb-3 text-3xl font-bold text-graphite-50">This screen is not open to your role</h1>
        <p className="mb-6 text-lg text-graphite-300">
          Your account can&apos;t use this part of Phasewright. If your work needs it, ask an administrator to
          change your role.
        </p>
        <LinkButton to="/" variant="primary">
          Back to the overview
        </LinkButton>
      </Panel>
    </div>
  );
}
