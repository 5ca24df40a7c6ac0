// Route table of the signed-out shell: each screen is its own chunk so the first screen stays
// lean (bench:bundle). The signed-in app's screens are in signed-in-routes.tsx.
import { lazy } from 'react';

export const SignInScreen = lazy(() => import('../screens/signin/SignInScreen'));
export const EnrolScreen = lazy(() => import('../screens/enrol/EnrolScreen'));
export const TabletErasedScreen = lazy(() => import('../screens/enrol/TabletErasedScreen'));
export const UnlockScreen = lazy(() => import('../screens/unlock/UnlockScreen'));

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
