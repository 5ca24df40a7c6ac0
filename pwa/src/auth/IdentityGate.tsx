// Routing by identity: nobody signed in → the signed-out routes (sign-in, unlock, enrol); an
// erased tablet → why it was erased; otherwise the app. RequireArea keeps each role to its areas.
import { useQueryClient } from '@tanstack/react-query';
import { useEffect, type ReactNode } from 'react';
import { Navigate, useLocation } from 'react-router-dom';
import type { ErasureNote } from './tablet-erasure';
import { canSee, homeFor, type Area } from './access';
import { useSession } from './session-context';
import { useAuthState } from './SessionProvider';

export function IdentityGate({
  signedOut,
  erased,
  loading,
  children,
}: {
  signedOut: ReactNode;
  erased: (note: ErasureNote) => ReactNode;
  loading: ReactNode;
  children: ReactNode;
}) {
  const { loaded, erasure } = useAuthState();
  const { user } = useSession();
  const queryClient = useQueryClient();
  useEffect(() => {
    // Nothing read from the server may outlive an erasure in memory either.
    if (erasure) queryClient.clear();
  }, [erasure, queryClient]);
  if (!loaded) return <>{loading}</>;
  if (erasure) return <>{erased(erasure)}</>;
  if (!user) return <>{signedOut}</>;
  return <>{children}</>;
}

/** Where a signed-out visitor lands: the person switcher when a PIN can unlock, else sign-in. */
export function SignedOutLanding() {
  const { people } = useAuthState();
  const location = useLocation();
  const target = people.some((p) => p.canUnlockWithPin) ? '/unlock' : '/signin';
  return <Navigate to={{ pathname: target, search: location.search }} replace />;
}

/** Renders `children` only for roles that see `area`; others go to their own home. */
export function RequireArea({ area, children }: { area: Area; children: ReactNode }) {
  const { user } = useSession();
  if (!user) return <Navigate to="/signin" replace />;
  if (!canSee(user.role, area)) return <Navigate to={homeFor(user.role)} replace />;
  return <>{children}</>;
}

/** The signed-in person's home (Today, or the Fleet for an admin). */
export function HomeRedirect() {
  const { user } = useSession();
  return <Navigate to={user ? homeFor(user.role) : '/signin'} replace />;
}
