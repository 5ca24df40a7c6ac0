// Starts the app's sync engine once the tablet is enrolled and someone is signed in, pushing
// each entry under its author's session (SessionSyncAuth) and pulling as whoever uses the
// tablet now. Renders nothing.
import { useEffect, useRef } from 'react';
import { getDefaultSessionStore } from '../auth/SessionProvider';
import { SessionSyncAuth } from '../auth/session-sync-auth';
import { useSession } from '../auth/session-context';
import type { SyncAuth } from './sync-auth';
import { configureSync, stopSync } from './sync-runtime';

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
    configureSync({
      baseUrl: baseUrl ?? '',
      auth: auth ?? new SessionSyncAuth(getDefaultSessionStore()),
      deviceId,
      pullAs: () => currentUser.current,
    });
    return () => stopSync();
  }, [deviceId, signedIn, auth, baseUrl]);
  return null;
}
