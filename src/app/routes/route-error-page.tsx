import { isRouteErrorResponse, useRouteError } from 'react-router';
import { BrandMark, BrandName } from '#src/components/ui/brand-mark';
import { buttonClass } from '#src/components/ui/button';
import { isApiError } from '#src/lib/api-client';

/** Shown when a screen fails to load or render. Says what happened and offers a way back. */
export function RouteErrorPage() {
  const error = useRouteError();
  let detail = 'An unexpected error stopped this screen.';
  let code: string | null = null;
  if (isRouteErrorResponse(error)) {
    detail = `${error.status} ${error.statusText}`.trim();
  } else if (isApiError(error)) {
    detail = error.message;
    code = error.code;
  } else if (error instanceof Error) {
    // A lazy module that fails to load after a new deployment is the usual cause; a reload fixes it.
    detail = /dynamically imported module|Importing a module script failed/i.test(error.message)
      ? 'Part of the application could not be loaded. It may have been updated: reload the page.'
      : error.message;
  }
  return (
    <main id="main" className="flex min-h-dvh flex-col items-center justify-center gap-6 p-6">
      <title>Something went wrong · Phasewright</title>
      <div className="flex items-center gap-3">
        <BrandMark size={44} />
        <BrandName className="text-2xl text-graphite-50" />
      </div>
      <div className="chamfer chamfer-lg flex w-full max-w-xl flex-col gap-4 p-8 [--ch-edge:var(--color-fault)]">
        <p className="flex items-center gap-2 text-sm font-semibold tracking-widest text-fault uppercase">
          <span aria-hidden className="inline-block size-3 bg-fault" /> Screen error
        </p>
        <h1 className="text-3xl font-bold text-graphite-50">Something went wrong</h1>
        <p className="text-lg text-graphite-200">{detail}</p>
        {code ? <p className="font-mono text-sm text-graphite-400">Code: {code}</p> : null}
        <p className="text-graphite-300">
          Nothing you entered was saved by this failure. Reload to try again.
        </p>
        <div className="flex flex-wrap gap-3">
          <button type="button" className={buttonClass('primary')} onClick={() => window.location.reload()}>
            Reload the page
          </button>
          <a href="/" className={buttonClass('secondary')}>
            Go to the overview
          </a>
        </div>
      </div>
    </main>
  );
}
