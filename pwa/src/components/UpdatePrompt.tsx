// Registers the service worker and offers the new version when one is waiting. The new version
// is put in place only at a safe moment (app/update-gate.ts): never while a field is being typed
// or a form holds unsaved edits; what is saved, and the Outbox, are in IndexedDB and carried over.
// Drawn without Ionic: it runs on the signed-out shell too, before Ionic is loaded.
import { useEffect, useRef, useState } from 'react';
import { useRegisterSW } from 'virtual:pwa-register/react';
import { applyUpdateWhenSafe, type PendingUpdate } from '../app/update-gate';
import '../auth/ui/identity.css';

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
  useEffect(() => () => pending.current?.cancel(), []);

  if (!needRefresh) return null;
  return (
    <section className="fl-update-prompt" aria-label="App update">
      <p role="status">{waitingForSafeMoment ? UPDATE_WAITING_WORDS : UPDATE_READY_WORDS}</p>
      <div className="fl-id-row">
        <button
          type="button"
          className="fl-id-button"
          data-tone="quiet"
          onClick={() => {
            pending.current?.cancel();
            setWaitingForSafeMoment(false);
            setNeedRefresh(false);
          }}
        >
          Later
        </button>
        {waitingForSafeMoment ? null : (
          <button
            type="button"
            className="fl-id-button"
            onClick={() => {
              pending.current?.cancel();
              pending.current = applyUpdateWhenSafe(() => updateServiceWorker(true));
              // Stays open while the update waits for the typing to end.
              setWaitingForSafeMoment(pending.current.waiting);
            }}
          >
            Update now
          </button>
        )}
      </div>
    </section>
  );
}
