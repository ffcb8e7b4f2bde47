import { createBrowserRouter, Outlet, RouterProvider } from 'react-router';
import { setSessionLostHandler } from '../lib/api-client';
import { queryClient } from '../lib/query-client';
import { authKeys } from '../features/auth/api/auth-keys';
import { RequireAccess } from './require-access';
import { RouteErrorPage } from './routes/route-error-page';
import { LoadingScreen } from './routes/loading-screen';

type AppRouterInstance = ReturnType<typeof createBrowserRouter>;
let router: AppRouterInstance | null = null;

/**
 * The app's router, made on first use: in React's first render, not while the app's modules are evaluated.
 * Making it starts the first navigation (the lazy modules of the address asked for, with their preload
 * links), and inside the evaluation task that work made the page's first task one of its longest.
 */
function appRouter(): AppRouterInstance {
  router ??= createAppRouter();
  return router;
}

/**
 * One lazy module per area: the sign-in pages, the signed-in shell, and each screen inside it. Every
 * admin screen sits under one guard, so a role that may not open it sees the not-allowed view (the
 * server refuses the data anyway).
 */
const createAppRouter = (): AppRouterInstance =>
  createBrowserRouter([
    {
      id: 'root',
      element: <Outlet />,
      ErrorBoundary: RouteErrorPage,
      HydrateFallback: LoadingScreen,
      children: [
        { path: 'sign-in', lazy: () => import('./routes/sign-in') },
        { path: 'forgot-password', lazy: () => import('./routes/forgot-password') },
        { path: 'set-password', lazy: () => import('./routes/set-password') },
        {
          id: 'shell',
          lazy: () => import('./routes/app-shell'),
          children: [
            { index: true, lazy: () => import('./routes/home') },
            {
              path: 'station',
              element: <RequireAccess access={['operator']} />,
              children: [
                { index: true, lazy: () => import('./routes/station') },
                { path: ':stationId', lazy: () => import('./routes/station') },
              ],
            },
            { path: 'units', lazy: () => import('./routes/units') },
            { path: 'units/:serial', lazy: () => import('./routes/unit') },
            {
              path: 'work-orders',
              element: <RequireAccess access={['engineer', 'quality']} />,
              children: [{ index: true, lazy: () => import('./routes/work-orders') }],
            },
            { path: 'recipes', lazy: () => import('./routes/recipes') },
            { path: 'recipes/models/:modelId', lazy: () => import('./routes/recipe-model') },
            { path: 'recipes/versions/:recipeId', lazy: () => import('./routes/recipe-version') },
            { path: 'recipes/versions/:recipeId/review', lazy: () => import('./routes/recipe-review') },
            {
              path: 'analysis',
              element: <RequireAccess access={['engineer', 'quality']} />,
              children: [{ index: true, lazy: () => import('./routes/analysis') }],
            },
            {
              path: 'quality',
              element: <RequireAccess access={['engineer', 'quality']} />,
              children: [
                { index: true, lazy: () => import('./routes/quality') },
                { path: 'investigations/:id', lazy: () => import('./routes/quality-investigation') },
              ],
            },
            {
              path: 'qualification',
              element: <RequireAccess access={['engineer', 'quality']} />,
              children: [
                { index: true, lazy: () => import('./routes/qualification') },
                { path: 'studies', lazy: () => import('./routes/gauge-studies') },
                { path: 'shifts', lazy: () => import('./routes/qualification-shifts') },
              ],
            },
            {
              path: 'admin',
              element: <RequireAccess access={['admin']} />,
              children: [
                { index: true, lazy: () => import('./routes/admin-index') },
                { path: 'people', lazy: () => import('./routes/admin-people') },
                { path: 'outbox', lazy: () => import('./routes/admin-outbox') },
                { path: 'audit', lazy: () => import('./routes/admin-audit') },
                { path: 'system', lazy: () => import('./routes/admin-system') },
                { path: 'stations', lazy: () => import('./routes/admin-stations') },
                { path: 'jobs', lazy: () => import('./routes/admin-jobs') },
              ],
            },
            { path: '*', lazy: () => import('./routes/not-found') },
          ],
        },
      ],
    },
  ]);

// A 401 on a signed-in call means the session ended elsewhere (expired after the shift, revoked by an
// admin): forget the identity and go to the sign-in page, then come back here afterwards.
setSessionLostHandler(() => {
  queryClient.setQueryData(authKeys.me(), null);
  const { pathname, search } = window.location;
  if (pathname.startsWith('/sign-in')) return;
  const next = encodeURIComponent(pathname + search);
  void appRouter().navigate(`/sign-in?expired=1&next=${next}`, { replace: true });
});

export function AppRouter() {
  return <RouterProvider router={appRouter()} />;
}
