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
// The sync engine is started by pwa/src/sync/SyncRuntime.tsx with SessionSyncAuth, which also
// sends a heartbeat after each sync; sign-in loads neither (bench:bundle).
import { IdleTimer } from './session/idle-lock';
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

  // The idle lock of a protected tablet (docs/threat-model.md): store.lock() does nothing on a
  // tablet without key slots.
  const someoneActive = snapshot.activeUser !== null;
  const idleMinutes = snapshot.policy.idleLockMinutes;
  useEffect(() => {
    if (!background || !someoneActive) return;
    const timer = new IdleTimer(() => Date.now(), idleMinutes * 60_000);
    const activity = () => timer.activity();
    const visibility = () => {
      if (document.visibilityState === 'hidden') timer.hidden();
      else if (timer.shown()) store.lock();
    };
    const check = setInterval(() => {
      if (timer.due()) store.lock();
    }, 15_000);
    const events = ['pointerdown', 'keydown', 'touchstart', 'wheel'] as const;
    for (const name of events) window.addEventListener(name, activity, { passive: true });
    document.addEventListener('visibilitychange', visibility);
    return () => {
      clearInterval(check);
      for (const name of events) window.removeEventListener(name, activity);
      document.removeEventListener('visibilitychange', visibility);
    };
  }, [store, background, someoneActive, idleMinutes]);
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
