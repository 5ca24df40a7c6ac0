// Starts the app's sync engine once the tablet is enrolled and someone is signed in, pushing
// each entry under its author's session (SessionSyncAuth) and pulling as whoever uses the
// tablet now; after each sync, a heartbeat with the Outbox size the engine just counted.
// Renders nothing.
import { useEffect, useRef } from 'react';
import { version as appVersion } from '../../package.json';
import { getDefaultSessionStore, useSessionStore } from '../auth/SessionProvider';
import { SessionSyncAuth } from '../auth/session-sync-auth';
import { useSession } from '../auth/session-context';
import type { SyncAuth } from './sync-auth';
import { configureSync, getSyncEngine, stopSync, subscribeSyncEngine } from './sync-runtime';

export function SyncRuntime(props: { auth?: SyncAuth; baseUrl?: string }) {
  const { user, deviceId } = useSession();
  const currentUser = useRef<string | null>(user?.id ?? null);
  useEffect(() => {
    currentUser.current = user?.id ?? null;
  }, [user]);
  const signedIn = user !== null;
  const { auth, baseUrl } = props;
  useEffect(() => {
    if (!deviceId || !signedIn) return;
    // In a task of its own: this mounts with the first screen, whose drawing is work enough for
    // one task on a slow tablet.
    const timer = setTimeout(() =>
      configureSync({
        baseUrl: baseUrl ?? '',
        auth: auth ?? new SessionSyncAuth(getDefaultSessionStore()),
        deviceId,
        pullAs: () => currentUser.current,
      }),
    );
    return () => {
      clearTimeout(timer);
      stopSync();
    };
  }, [deviceId, signedIn, auth, baseUrl]);

  // Heartbeat after each sync (and a retired tablet's next step towards handing in), with the
  // Outbox size the engine just counted; followed across engines as the one above restarts it.
  const store = useSessionStore();
  useEffect(() => {
    if (!deviceId || !signedIn) return;
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
  }, [store, deviceId, signedIn]);
  return null;
}
