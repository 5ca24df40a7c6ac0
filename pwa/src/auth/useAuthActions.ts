import { useMemo } from 'react';
import type { LoginRequest } from '@fuselight/shared';
import { useSessionStore } from './SessionProvider';

/** What a person can do about who is using the tablet. */
export function useAuthActions() {
  const store = useSessionStore();
  return useMemo(
    () => ({
      signIn: (credentials: Pick<LoginRequest, 'email' | 'password'>) => store.signIn(credentials),
      signOut: () => store.signOut(),
      unlock: (userId: string, pin: string) => store.unlock(userId, pin),
      switchPerson: () => store.switchPerson(),
      setActiveSite: (siteId: string) => store.setActiveSite(siteId),
      setPin: (pin: string) => store.setPin(pin),
      hardwareKeyAvailable: () => store.hardwareKeyAvailable(),
      pinShortfall: (secret: string) => store.pinShortfall(secret),
      declinePin: () => store.declinePin(),
      enrol: (code: string) => store.enrol(code),
      dismissErasure: () => store.dismissErasure(),
      /** A server call as the person using the tablet (refreshes once on a refused token). */
      asActivePerson: <T>(call: (token: string) => Promise<T>) => store.asActivePerson(call),
      api: store.api,
    }),
    [store],
  );
}
