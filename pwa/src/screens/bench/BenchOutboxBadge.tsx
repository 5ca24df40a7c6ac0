// A small always-visible word on sync: online or not, and how many edits wait in the Outbox.
import { useSyncExternalStore } from 'react';
import { useOutboxCounts } from '../../data';

function subscribeOnline(callback: () => void): () => void {
  window.addEventListener('online', callback);
  window.addEventListener('offline', callback);
  return () => {
    window.removeEventListener('online', callback);
    window.removeEventListener('offline', callback);
  };
}

export function BenchOutboxBadge() {
  const online = useSyncExternalStore(subscribeOnline, () => navigator.onLine);
  const counts = useOutboxCounts().data;
  const waiting = counts?.total ?? 0;
  const words =
    waiting === 0
      ? 'Everything is sent'
      : `${waiting} edit${waiting === 1 ? '' : 's'} in the Outbox`;
  return (
    <p className="fl-bench-sync" role="status" aria-live="polite" data-testid="bench-sync">
      <span
        className={online ? 'fl-bench-sync__dot' : 'fl-bench-sync__dot fl-bench-sync__dot--off'}
        aria-hidden="true"
      />
      {online ? 'Online' : 'Offline'} · {words}
      {counts && counts.rejected > 0 ? ` (${counts.rejected} refused: see the Outbox)` : ''}
    </p>
  );
}
