import { QueryClient } from '@tanstack/react-query';
import { isApiError } from './api-client';

/** One client for the app. Client errors (4xx) are answers, not glitches: they are never retried. */
export const queryClient = new QueryClient({
  defaultOptions: {
    queries: {
      staleTime: 15_000,
      retry: (failureCount, error) => {
        if (isApiError(error) && error.status >= 400 && error.status < 500) return false;
        return failureCount < 2;
      },
      refetchOnWindowFocus: true,
    },
    mutations: { retry: false },
  },
});
