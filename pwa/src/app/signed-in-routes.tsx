// Route table of the signed-in app (SignedInApp.tsx): each screen is its own chunk.
import { lazy } from 'react';

export const TodayScreen = lazy(() => import('../screens/today/TodayScreen'));
export const ChartScreen = lazy(() => import('../screens/chart/ChartScreen'));
export const VisitScreen = lazy(() => import('../screens/visit/VisitScreen'));
export const OutboxScreen = lazy(() => import('../screens/outbox/OutboxScreen'));
export const ReviewDeskScreen = lazy(() => import('../screens/review/ReviewDeskScreen'));
export const FleetScreen = lazy(() => import('../screens/fleet/FleetScreen'));
export const PinSetupScreen = lazy(() => import('../screens/unlock/PinSetupScreen'));
export const PersonScreen = lazy(() => import('../screens/unlock/PersonScreen'));
export const PeopleScreen = lazy(() => import('../screens/admin/PeopleScreen'));
export const SitesScreen = lazy(() => import('../screens/admin/SitesScreen'));
export const BenchScreen = lazy(() => import('../screens/bench/BenchScreen'));

// Parts of the shell that only a signed-in person on an enrolled tablet sees: the sync engine
// and its indicator, and the Review desk's count (they bring the records database, the sync
// engine and the shared schemas, which sign-in does not need).
export const SyncRuntime = lazy(() =>
  import('../sync/SyncRuntime').then((m) => ({ default: m.SyncRuntime })),
);
export const SyncDock = lazy(() => import('./SyncDock').then((m) => ({ default: m.SyncDock })));
export const ReviewTabBadge = lazy(() =>
  import('../screens/review/ReviewTabCount').then((m) => ({ default: m.ReviewTabBadge })),
);
