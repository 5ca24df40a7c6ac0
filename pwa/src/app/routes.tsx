// Route table: each screen is its own chunk so the first screen stays lean (bench:bundle).
import { lazy } from 'react';

export const TodayScreen = lazy(() => import('../screens/today/TodayScreen'));
export const OutboxScreen = lazy(() => import('../screens/outbox/OutboxScreen'));
export const ReviewDeskScreen = lazy(() => import('../screens/review/ReviewDeskScreen'));
export const FleetScreen = lazy(() => import('../screens/fleet/FleetScreen'));
