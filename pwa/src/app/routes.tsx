// Route table of the signed-out shell. Sign-in, the screen a new tablet opens on, comes with the
// first chunk (no second round trip before it draws); the others are chunks of their own so the
// first screen stays lean (bench:bundle). The signed-in app's screens are in signed-in-routes.tsx.
import { lazy } from 'react';

export { default as SignInScreen } from '../screens/signin/SignInScreen';

const loadEnrol = () => import('../screens/enrol/EnrolScreen');
const loadUnlock = () => import('../screens/unlock/UnlockScreen');

export const EnrolScreen = lazy(loadEnrol);
export const TabletErasedScreen = lazy(() => import('../screens/enrol/TabletErasedScreen'));
export const UnlockScreen = lazy(loadUnlock);

/**
 * Starts loading the screen of the address the app opens on (unlock, enrolment) at
 * once, beside the session's own load, rather than after it.
 */
export function preloadShellScreen(pathname: string): void {
  const load = { '/unlock': loadUnlock, '/enrol': loadEnrol }[pathname];
  void load?.();
}

// The update prompt registers the service worker once the first screen is up.
export const UpdatePrompt = lazy(() =>
  import('../components/UpdatePrompt').then((m) => ({ default: m.UpdatePrompt })),
);
// The storage warning reads the Outbox (the records database and its repositories), so it comes
// after the first screen; it only ever warns of what a tablet has stored.
export const StorageWarningBanner = lazy(() =>
  import('../components/StorageWarningBanner').then((m) => ({
    default: m.StorageWarningBanner,
  })),
);
// The note of values that failed authentication: it can only have something to say once the
// records have been read, after the first screen.
export const DamagedValuesNote = lazy(() =>
  import('../components/DamagedValuesNote').then((m) => ({ default: m.DamagedValuesNote })),
);
