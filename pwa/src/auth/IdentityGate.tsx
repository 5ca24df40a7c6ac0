// Routing by identity: an erased tablet shows why it was erased; otherwise the app, where
// RequireArea sends nobody-signed-in to sign-in (or the PIN switcher) and keeps each role to its
// areas. Guards read the store's snapshot directly so that they see a sign-in at once.
import { useQueryClient } from '@tanstack/react-query';
import { useEffect, type ReactNode } from 'react';
import { Navigate, useLocation } from 'react-router-dom';
import type { ErasureNote } from './tablet-erasure';
import { canSee, homeFor, type Area } from './access';
import { useAuthState } from './SessionProvider';

export function IdentityGate({
  erased,
  loading,
  children,
}: {
  erased: (note: ErasureNote) => ReactNode;
  loading: ReactNode;
  children: ReactNode;
}) {
  const { loaded, erasure, activeUser } = useAuthState();
  const queryClient = useQueryClient();
  useEffect(() => {
    // Nothing read from the server may outlive an erasure in memory either.
    if (erasure) queryClient.clear();
  }, [erasure, queryClient]);
  const someoneActive = activeUser !== null;
  useEffect(() => {
    // Locked, or handed to someone else: no patient data stays in the screens' cache.
    if (!someoneActive) queryClient.clear();
  }, [someoneActive, queryClient]);
  if (!loaded) return <>{loading}</>;
  if (erasure) return <>{erased(erasure)}</>;
  return <>{children}</>;
}

/** Where a signed-out visitor lands: the person switcher when a PIN can unlock, else sign-in. */
export function SignedOutLanding() {
  const { people } = useAuthState();
  const location = useLocation();
  const target = people.some((p) => p.canUnlockWithPin) ? '/unlock' : '/signin';
  if (location.pathname === target) return null;
  // The unlock screen goes back to the screen that was open (locked there, or reloaded).
  const from = `${location.pathname}${location.search}`;
  return <Navigate to={{ pathname: target, search: location.search }} state={{ from }} replace />;
}

/** Renders `children` only for roles that see `area`; others go to their own home. */
export function RequireArea({ area, children }: { area: Area; children: ReactNode }) {
  const user = useAuthState().activeUser;
  if (!user) return <SignedOutLanding />;
  if (!canSee(user.role, area)) return <Navigate to={homeFor(user.role)} replace />;
  return <>{children}</>;
}

/** The signed-in person's home (Today, or the Fleet for an admin). */
export function HomeRedirect() {
  const { activeUser: user, pinOfferFor } = useAuthState();
  if (!user) return <SignedOutLanding />;
  return <Navigate to={pinOfferFor === user.id ? '/pin' : homeFor(user.role)} replace />;
}
