// Registers the service worker and offers the new version when one is waiting. The new version
// is put in place only at a safe moment (app/update-gate.ts): never while a field is being typed
// or a form holds unsaved edits; what is saved, and the Outbox, are in IndexedDB and carried over.
import { IonToast } from '@ionic/react';
import { useEffect, useRef, useState } from 'react';
import { useRegisterSW } from 'virtual:pwa-register/react';
import { lookForAppUpdate } from '../app/app-update';
import { applyUpdateWhenSafe, type PendingUpdate } from '../app/update-gate';
import { useSyncStatus } from '../sync';

export const UPDATE_READY_WORDS =
  'A new version of Fuselight is ready. Your saved work and Outbox stay on this tablet.';
export const UPDATE_WAITING_WORDS =
  'The new version is put in place as soon as you finish typing. Your saved work and Outbox stay on this tablet.';

export function UpdatePrompt() {
  const {
    needRefresh: [needRefresh, setNeedRefresh],
    updateServiceWorker,
  } = useRegisterSW({ immediate: true });
  const pending = useRef<PendingUpdate | null>(null);
  const [waitingForSafeMoment, setWaitingForSafeMoment] = useState(false);
  // Records from a newer build arrived: look for the new version now rather than at next start.
  const newerRecords = useSyncStatus().newerRecords !== null;
  useEffect(() => {
    if (newerRecords && !needRefresh) void lookForAppUpdate();
  }, [newerRecords, needRefresh]);
  useEffect(() => () => pending.current?.cancel(), []);

  if (!needRefresh) return null;
  return (
    <IonToast
      isOpen
      message={waitingForSafeMoment ? UPDATE_WAITING_WORDS : UPDATE_READY_WORDS}
      position="bottom"
      buttons={[
        {
          text: 'Later',
          role: 'cancel',
          handler: () => {
            pending.current?.cancel();
            setWaitingForSafeMoment(false);
            setNeedRefresh(false);
          },
        },
        {
          text: 'Update now',
          handler: () => {
            pending.current?.cancel();
            pending.current = applyUpdateWhenSafe(() => updateServiceWorker(true));
            setWaitingForSafeMoment(pending.current.waiting);
            // Keep the toast open while the update waits for the typing to end.
            return !pending.current.waiting;
          },
        },
      ]}
    />
  );
}
