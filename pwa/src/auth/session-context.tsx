// Who is using the tablet right now. The identity work fills the provider (sign-in, offline
// PIN unlock, switching person); every screen reads it through useSession().
import { createContext, useContext } from 'react';
import type { SessionUser } from '@fuselight/shared';

export interface TabletSession {
  /** The person signed in or unlocked on this tablet, or null when nobody is. */
  user: SessionUser | null;
  /** The enrolled tablet's id, or null in a desk browser that is not enrolled. */
  deviceId: string | null;
  /** The site the person is working at now (one of user.siteIds). */
  activeSiteId: string | null;
}

export const SessionContext = createContext<TabletSession>({
  user: null,
  deviceId: null,
  activeSiteId: null,
});

export function useSession(): TabletSession {
  return useContext(SessionContext);
}
