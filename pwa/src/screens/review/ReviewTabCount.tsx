// The count on the Review desk tab: open Disputes plus visits waiting for a countersignature, from
// GET /api/review/summary (the same query the desk's own tabs read, so they agree). It is a
// server figure, so offline, or when the last ask failed, the tab shows no number at all rather
// than a stale one. It changes without a reload: the live stream's `review` event (a Dispute opened
// or settled, a visit signed or countersigned at any tablet) has every Review desk query asked
// again. On a tablet that event comes on the sync engine's stream; a supervisor at a desk (no
// tablet) holds the Review desk's own stream, GET /api/review/events.
import { IonBadge } from '@ionic/react';
import { useQuery, useQueryClient } from '@tanstack/react-query';
import { useCallback, useEffect, useSyncExternalStore } from 'react';
import { useSessionStore } from '../../auth/SessionProvider';
import { useSession } from '../../auth/session-context';
import { LiveStream } from '../../sync/live-stream';
import { browserNetwork } from '../../sync/sync-schedule';
import { subscribeReviewChanges } from '../../sync/sync-runtime';
import { defaultTimers } from '../../sync/sync-transport';
import { type ReviewApi, type ReviewSummary } from './review-api';
import { useSessionReviewApi } from './review-context';
import { queryKeys } from '../../data/query-keys';

const REFRESH_EVERY_MS = 60_000;

function subscribeOnline(onChange: () => void): () => void {
  window.addEventListener('online', onChange);
  window.addEventListener('offline', onChange);
  return () => {
    window.removeEventListener('online', onChange);
    window.removeEventListener('offline', onChange);
  };
}

/** What the badge shows: null for nothing (offline, failed, not yet known, or nothing waiting). */
export function tabCount(
  summary: ReviewSummary | undefined,
  state: { online: boolean; failed: boolean },
): number | null {
  if (!state.online || state.failed || !summary) return null;
  const total = summary.openDisputes + summary.awaitingCountersign;
  return total > 0 ? total : null;
}

/**
 * Asks the Review desk's queries again whenever a live stream says its queues moved: the tablet's
 * sync stream, or (at a desk, `deskToken` given) the desk's own stream held here.
 */
export function useLiveReviewRefresh(deskToken: (() => Promise<string | null>) | null): void {
  const queryClient = useQueryClient();
  useEffect(() => {
    const refresh = () => {
      void queryClient.invalidateQueries({ queryKey: queryKeys.review.all() });
    };
    const unsubscribe = subscribeReviewChanges(refresh);
    if (!deskToken) return unsubscribe;
    const stream = new LiveStream({
      baseUrl: '',
      path: '/api/review/events',
      fetch: (input, init) => fetch(input, init),
      token: deskToken,
      network: browserNetwork(),
      timers: defaultTimers,
      random: Math.random,
      onChanged: () => undefined,
      onReview: refresh,
      // Opened again: what moved while it was down is asked for now.
      onState: (state) => {
        if (state === 'live') refresh();
      },
      onRefused: () => undefined,
    });
    stream.start();
    return () => {
      unsubscribe();
      stream.stop();
    };
  }, [queryClient, deskToken]);
}

export function ReviewTabCount({
  api,
  deskToken = null,
}: {
  api: ReviewApi;
  deskToken?: (() => Promise<string | null>) | null;
}) {
  useLiveReviewRefresh(deskToken);
  const online = useSyncExternalStore(subscribeOnline, () => navigator.onLine);
  const summary = useQuery({
    queryKey: queryKeys.review.summary(),
    queryFn: () => api.summary(),
    enabled: online,
    refetchInterval: online ? REFRESH_EVERY_MS : false,
    retry: false,
  });
  // A failed ask after a good one still leaves the old data: treat it as unknown.
  const failed = summary.isError || summary.errorUpdatedAt > summary.dataUpdatedAt;
  const count = tabCount(summary.data, { online, failed });
  if (count === null || !summary.data) return null;
  const { openDisputes, awaitingCountersign } = summary.data;
  return (
    <IonBadge
      color="danger"
      aria-label={`${openDisputes} open Dispute${openDisputes === 1 ? '' : 's'}, ${awaitingCountersign} visit${awaitingCountersign === 1 ? '' : 's'} to countersign`}
    >
      {count > 99 ? '99+' : count}
    </IonBadge>
  );
}

/** The badge for the signed-in supervisor's session (App.tsx puts it on the tab). */
export function ReviewTabBadge() {
  const store = useSessionStore();
  const { user, deviceId } = useSession();
  const userId = user?.id ?? null;
  const token = useCallback(
    () => (userId ? store.tokenFor(userId) : Promise.resolve(null)),
    [store, userId],
  );
  return (
    <ReviewTabCount api={useSessionReviewApi()} deskToken={deviceId || !userId ? null : token} />
  );
}
