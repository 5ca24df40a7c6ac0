// Route table of the signed-in app (SignedInApp.tsx): each screen is its own chunk. What works
// with records (the clinical screens, the Review desk, the sync engine) loads once the record
// schemas are built, a few at a time (build-schemas.ts), so that no single task builds them all.
import { lazy } from 'react';
import { buildSchemas } from './build-schemas';

const withSchemas =
  <T,>(load: () => Promise<T>) =>
  () =>
    buildSchemas().then(load);

export const TodayScreen = lazy(withSchemas(() => import('../screens/today/TodayScreen')));
export const ChartScreen = lazy(withSchemas(() => import('../screens/chart/ChartScreen')));
export const VisitScreen = lazy(withSchemas(() => import('../screens/visit/VisitScreen')));
export const OutboxScreen = lazy(withSchemas(() => import('../screens/outbox/OutboxScreen')));
export const ReviewDeskScreen = lazy(
  withSchemas(() => import('../screens/review/ReviewDeskScreen')),
);
export const FleetScreen = lazy(() => import('../screens/fleet/FleetScreen'));
export const PinSetupScreen = lazy(() => import('../screens/unlock/PinSetupScreen'));
export const PersonScreen = lazy(() => import('../screens/unlock/PersonScreen'));
export const PeopleScreen = lazy(() => import('../screens/admin/PeopleScreen'));
export const SitesScreen = lazy(() => import('../screens/admin/SitesScreen'));
export const BenchScreen = lazy(withSchemas(() => import('../screens/bench/BenchScreen')));

// Parts of the shell that only a signed-in person on an enrolled tablet sees: the sync engine
// and its indicator, and the Review desk's count (they bring the records database, the sync
// engine and the shared schemas, which sign-in does not need).
export const SyncRuntime = lazy(
  withSchemas(() => import('../sync/SyncRuntime').then((m) => ({ default: m.SyncRuntime }))),
);
// It follows the sync status, so it brings the sync engine too.
export const NewerRecordsUpdateCheck = lazy(
  withSchemas(() =>
    import('../components/NewerRecordsUpdateCheck').then((m) => ({
      default: m.NewerRecordsUpdateCheck,
    })),
  ),
);
export const SyncDock = lazy(
  withSchemas(() => import('./SyncDock').then((m) => ({ default: m.SyncDock }))),
);
export const ReviewTabBadge = lazy(
  withSchemas(() =>
    import('../screens/review/ReviewTabCount').then((m) => ({ default: m.ReviewTabBadge })),
  ),
);
