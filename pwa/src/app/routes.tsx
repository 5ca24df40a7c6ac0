// Route table: each screen is its own chunk so the first screen stays lean (bench:bundle).
import { lazy } from 'react';

export const TodayScreen = lazy(() => import('../screens/today/TodayScreen'));
export const ChartScreen = lazy(() => import('../screens/chart/ChartScreen'));
export const VisitScreen = lazy(() => import('../screens/visit/VisitScreen'));
export const OutboxScreen = lazy(() => import('../screens/outbox/OutboxScreen'));
export const ReviewDeskScreen = lazy(() => import('../screens/review/ReviewDeskScreen'));
export const FleetScreen = lazy(() => import('../screens/fleet/FleetScreen'));
export const SignInScreen = lazy(() => import('../screens/signin/SignInScreen'));
export const EnrolScreen = lazy(() => import('../screens/enrol/EnrolScreen'));
export const TabletErasedScreen = lazy(() => import('../screens/enrol/TabletErasedScreen'));
export const UnlockScreen = lazy(() => import('../screens/unlock/UnlockScreen'));
export const PinSetupScreen = lazy(() => import('../screens/unlock/PinSetupScreen'));
export const PersonScreen = lazy(() => import('../screens/unlock/PersonScreen'));
export const PeopleScreen = lazy(() => import('../screens/admin/PeopleScreen'));
export const SitesScreen = lazy(() => import('../screens/admin/SitesScreen'));
export const BenchScreen = lazy(() => import('../screens/bench/BenchScreen'));
