// Which ReviewApi the desk uses: by default the signed-in supervisor's, over the network; tests
// pass one over a stand-in fetch.
import { createContext, useContext, useMemo, type ReactNode } from 'react';
import { useSessionStore } from '../../auth/SessionProvider';
import { useSession } from '../../auth/session-context';
import { ReviewApi } from './review-api';

const ReviewApiContext = createContext<ReviewApi | null>(null);

export function ReviewApiProvider({ api, children }: { api: ReviewApi; children: ReactNode }) {
  return <ReviewApiContext.Provider value={api}>{children}</ReviewApiContext.Provider>;
}

/** The session's API, built from the session store's token access. */
export function useSessionReviewApi(): ReviewApi {
  const store = useSessionStore();
  const userId = useSession().user?.id ?? null;
  return useMemo(
    () =>
      new ReviewApi({
        fetch: (input, init) => fetch(input, init),
        accessToken: () => (userId ? store.tokenFor(userId) : null),
      }),
    [store, userId],
  );
}

export function useReviewApi(): ReviewApi {
  const api = useContext(ReviewApiContext);
  if (!api) throw new Error('useReviewApi outside ReviewApiProvider');
  return api;
}
