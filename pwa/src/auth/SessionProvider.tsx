// Fills SessionContext from the SessionStore, and keeps the tablet in touch with the server:
// a status check and heartbeat every few minutes while online, and a retired tablet's wait for
// its Outbox to empty. Screens read useSession(); identity screens use useAuthActions().
import {
  createContext,
  useContext,
  useEffect,
  useMemo,
  useState,
  useSyncExternalStore,
  type ReactNode,
} from 'react';
import { version as appVersion } from '../../package.json';
// The sync engine itself is started by pwa/src/sync/SyncRuntime.tsx with SessionSyncAuth.
import { getSyncEngine, subscribeSyncEngine } from '../sync/sync-runtime';
import { SessionContext, type TabletSession } from './session-context';
import { SessionStore, type AuthSnapshot } from './session-store';
import { DEFAULT_UNLOCK_POLICY, type UnlockPolicy } from './session/types';

const HEARTBEAT_EVERY_MS = 3 * 60_000;
const RETIREMENT_CHECK_EVERY_MS = 10_000;

let defaultStore: SessionStore | null = null;
/** The app's one store (tests pass their own to SessionProvider). */
export function getDefaultSessionStore(): SessionStore {
  defaultStore ??= new SessionStore();
  return defaultStore;
}

const StoreContext = createContext<SessionStore | null>(null);

export function SessionProvider({
  store: given,
  children,
  background = true,
}: {
  store?: SessionStore;
  children: ReactNode;
  /** Status checks and heartbeats; tests turn them off. */
  background?: boolean;
}) {
  const [store] = useState(() => given ?? getDefaultSessionStore());
  const snapshot = useSyncExternalStore(store.subscribe, store.getSnapshot);

  useEffect(() => {
    store.load().catch(() => undefined);
  }, [store]);

  const enrolled = snapshot.tablet !== null;
  const retired = snapshot.tablet?.state === 'retired';
  useEffect(() => {
    if (!background || !enrolled) return;
    const beat = () => {
      if (!navigator.onLine) return;
      store
        .checkTablet()
        .then(() => store.heartbeat(appVersion))
        .then(() => store.refreshSites())
        .catch(() => undefined);
    };
    beat();
    store.askForPersistentStorageOnce().catch(() => undefined);
    const timer = setInterval(beat, HEARTBEAT_EVERY_MS);
    window.addEventListener('online', beat);
    return () => {
      clearInterval(timer);
      window.removeEventListener('online', beat);
    };
  }, [store, background, enrolled]);

  useEffect(() => {
    if (!background || !retired) return;
    const timer = setInterval(() => {
      store.continueRetirement().catch(() => undefined);
    }, RETIREMENT_CHECK_EVERY_MS);
    return () => clearInterval(timer);
  }, [store, background, retired]);

  // Heartbeat after each sync, with the Outbox size the sync engine just counted.
  useEffect(() => {
    if (!background) return;
    let lastSyncedAt: number | null = null;
    let unsubscribeStatus: (() => void) | null = null;
    const watch = () => {
      unsubscribeStatus?.();
      const engine = getSyncEngine();
      unsubscribeStatus =
        engine?.status.subscribe(() => {
          const status = engine.status.getSnapshot();
          if (status.lastSyncedAt !== null && status.lastSyncedAt !== lastSyncedAt) {
            lastSyncedAt = status.lastSyncedAt;
            store.heartbeat(appVersion).catch(() => undefined);
            if (store.getSnapshot().tablet?.state === 'retired') {
              store.continueRetirement().catch(() => undefined);
            }
          }
        }) ?? null;
    };
    watch();
    const unsubscribeEngine = subscribeSyncEngine(watch);
    return () => {
      unsubscribeEngine();
      unsubscribeStatus?.();
    };
  }, [store, background]);

  const session = useMemo<TabletSession>(
    () => ({
      user: snapshot.activeUser,
      deviceId: snapshot.tablet?.deviceId ?? null,
      activeSiteId: snapshot.activeSiteId,
    }),
    [snapshot.activeUser, snapshot.tablet?.deviceId, snapshot.activeSiteId],
  );

  return (
    <StoreContext.Provider value={store}>
      <SessionContext.Provider value={session}>{children}</SessionContext.Provider>
    </StoreContext.Provider>
  );
}

export function useSessionStore(): SessionStore {
  const store = useContext(StoreContext);
  if (!store) throw new Error('useSessionStore needs a SessionProvider above it');
  return store;
}

/** Everything the identity screens show: people on this tablet, prompts, erasure, policy. */
export function useAuthState(): AuthSnapshot {
  const store = useSessionStore();
  return useSyncExternalStore(store.subscribe, store.getSnapshot);
}

const noSubscribe = () => () => undefined;
const noSnapshot = () => null;

/**
 * The clinic's policy for its tablets (offline unlock, how long edits may wait unsynced); the
 * defaults where no session store is above (a screen rendered alone in a test).
 */
export function useTabletPolicy(): UnlockPolicy {
  const store = useContext(StoreContext);
  const snapshot = useSyncExternalStore(
    store?.subscribe ?? noSubscribe,
    store?.getSnapshot ?? noSnapshot,
  );
  return snapshot?.policy ?? DEFAULT_UNLOCK_POLICY;
}

export { appVersion };
