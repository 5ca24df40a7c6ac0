// Shown above every screen, in the page's flow (it pushes the app down and never covers a field),
// while edits have waited unsynced longer than the clinic allows, while the browser refuses
// persistent storage, or while the storage is nearly full: a browser may clear a site's storage,
// and with it edits that exist only on this tablet (pwa/src/storage/).
import { describeWait, describeWarningHours } from '../storage/unsynced-age';
import { useStorageWarnings, type StorageWarnings } from '../storage/useStorageWarnings';

/** The warnings in words, one sentence group each; empty when there is nothing to warn of. */
export function storageWarningLines(warnings: StorageWarnings): string[] {
  const lines: string[] = [];
  if (warnings.unsynced) {
    lines.push(
      `Edits on this tablet have waited ${describeWait(warnings.unsynced.waitedMs)} without reaching the clinic server; the clinic allows ${describeWarningHours(warnings.unsynced.warningHours)}. Until they are sent they exist only on this tablet, and a browser may clear its storage. Connect to the clinic’s network and sync; the Outbox shows what waits.`,
    );
  }
  if (warnings.persistenceRefused) {
    lines.push(
      'This browser has not granted Fuselight persistent storage, so it may clear what is kept on this tablet, unsent edits included, when space runs short or after days without use. Sync often; installing Fuselight on the home screen usually lets the browser keep its storage.',
    );
  }
  if (warnings.nearlyFull?.usedShare != null) {
    lines.push(
      `This tablet’s storage is ${Math.round(warnings.nearlyFull.usedShare * 100)} % full. When it is full, edits cannot be saved: sync, and free space on the tablet.`,
    );
  }
  return lines;
}

export function StorageWarningText(props: { warnings: StorageWarnings }) {
  const lines = storageWarningLines(props.warnings);
  if (lines.length === 0) return null;
  return (
    <section aria-label="Storage warning" className="fl-storage-banner">
      <span className="fl-storage-banner__mark" aria-hidden="true">
        ⚠
      </span>
      <div role="alert">
        {lines.map((line) => (
          <p key={line.slice(0, 40)}>{line}</p>
        ))}
      </div>
    </section>
  );
}

export function StorageWarningBanner() {
  return <StorageWarningText warnings={useStorageWarnings()} />;
}
