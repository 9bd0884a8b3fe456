import { MutationCache, QueryCache, QueryClient } from '@tanstack/react-query';
import { ApiError } from './client';

/** A 401 on any request means the session ended: asking for "me" again sends the shell to sign-in. */
function onError(error: unknown, queryKey?: readonly unknown[]) {
  if (error instanceof ApiError && error.isUnauthorized && queryKey?.[0] !== 'me') {
    void queryClient.invalidateQueries({ queryKey: ['me'] });
  }
}

// 4xx answers are final (retrying a 403 or 404 only delays the message); network and 5xx errors
// get two more tries.
export const queryClient: QueryClient = new QueryClient({
  queryCache: new QueryCache({ onError: (error, query) => onError(error, query.queryKey) }),
  mutationCache: new MutationCache({ onError: (error) => onError(error) }),
  defaultOptions: {
    queries: {
      staleTime: 30_000,
      refetchOnWindowFocus: false,
      retry: (count, error) => {
        if (error instanceof ApiError && error.status >= 400 && error.status < 500) return false;
        return count < 2;
      },
    },
    mutations: { retry: false },
  },
});
