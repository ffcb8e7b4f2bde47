import {
  NavLink,
  Outlet,
  redirect,
  useMatch,
  useNavigate,
  useNavigation,
  type LoaderFunctionArgs,
} from 'react-router';
import { ROLE_LABELS, roleAllows } from '#shared/schemas/roles';
import { BrandMark, BrandName } from '#src/components/ui/brand-mark';
import { Button } from '#src/components/ui/button';
import { meQueryOptions, useMe } from '#src/features/auth/api/me';
import { useSignOut } from '#src/features/auth/api/sign-in';
import { queryClient } from '#src/lib/query-client';
import { NAV_ITEMS } from '../navigation';

/** The shell needs a session: without one, go to sign-in and come back here afterwards. */
export async function loader({ request }: LoaderFunctionArgs) {
  const me = await queryClient.ensureQueryData(meQueryOptions());
  if (!me) {
    const url = new URL(request.url);
    const next = url.pathname + url.search;
    return redirect(next === '/' ? '/sign-in' : `/sign-in?next=${encodeURIComponent(next)}`);
  }
  return me;
}

export function Component() {
  const { data: me } = useMe();
  const navigate = useNavigate();
  const signOut = useSignOut();
  const navigation = useNavigation();
  // The station screen is read from two metres on wide panels: it uses the whole width.
  const wide = useMatch('/station/:stationId') !== null;
  const width = wide ? 'max-w-none' : 'max-w-[1400px]';

  if (!me) return null;
  const items = NAV_ITEMS.filter((item) => roleAllows(item.access, me.role));

  return (
    <div className="flex min-h-dvh flex-col">
      <a
        href="#main"
        className="sr-only z-50 bg-copper-400 px-5 font-semibold text-graphite-950 focus:not-sr-only focus:fixed focus:top-2 focus:left-2 focus:inline-flex focus:min-h-target focus:min-w-target focus:items-center"
      >
        Skip to content
      </a>
      <header className="border-b border-graphite-800 bg-graphite-900">
        <div className={`mx-auto flex ${width} flex-wrap items-center gap-x-5 gap-y-3 px-4 py-3 sm:px-6`}>
          <NavLink
            to="/"
            className="flex min-h-target items-center gap-3 no-underline"
            aria-label="Phasewright overview"
          >
            <BrandMark size={40} />
            <BrandName className="text-xl text-graphite-50" />
          </NavLink>
          <nav aria-label="Main" className="order-3 w-full lg:order-none lg:w-auto lg:flex-1">
            <ul className="flex flex-wrap gap-0.5">
              {items.map((item) => (
                <li key={item.to}>
                  <NavLink
                    to={item.to}
                    end={item.to === '/'}
                    className={({ isActive }) =>
                      `inline-flex min-h-target items-center border-b-4 px-2.5 text-base font-semibold no-underline ${
                        isActive
                          ? 'border-copper-400 bg-graphite-800 text-graphite-50'
                          : 'border-transparent text-graphite-300 hover:border-graphite-600 hover:text-graphite-50'
                      }`
                    }
                  >
                    {item.label}
                  </NavLink>
                </li>
              ))}
            </ul>
          </nav>
          <div className="ml-auto flex items-center gap-4">
            <div className="flex flex-col items-end leading-tight" data-testid="signed-in-as">
              <span className="font-semibold text-graphite-50">{me.displayName}</span>
              <span className="text-sm tracking-wide text-copper-200">{ROLE_LABELS[me.role]}</span>
            </div>
            <Button
              variant="secondary"
              busy={signOut.isPending}
              onClick={() =>
                signOut.mutate(undefined, { onSettled: () => navigate('/sign-in', { replace: true }) })
              }
            >
              Sign out
            </Button>
          </div>
        </div>
        <div
          aria-hidden
          className={`h-0.5 bg-copper-400 transition-opacity ${navigation.state === 'loading' ? 'animate-pulse opacity-100' : 'opacity-0'}`}
        />
      </header>
      <main
        id="main"
        tabIndex={-1}
        className={`mx-auto w-full ${width} flex-1 px-4 py-8 sm:px-6 focus:outline-none`}
      >
        <Outlet />
      </main>
      <footer className="border-t border-graphite-800 px-6 py-4 text-sm text-graphite-300">
        <div className={`mx-auto flex ${width} flex-wrap justify-between gap-2`}>
          <span>Phasewright · end-of-line hall-offset calibration</span>
          <span>
            Signed in as <span className="font-mono">{me.username}</span>
          </span>
        </div>
      </footer>
    </div>
  );
}
