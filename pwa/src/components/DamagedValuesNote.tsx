// Shown above every screen, where a damaged record would otherwise silently be missing: a value
// stored on this tablet failed authentication (a byte altered in its sealed form, or a value
// moved onto another record), so the sealing layer left it out of every answer
// (docs/threat-model.md). Nothing else is lost; the sync engine fetches a good copy of a record
// with a full re-pull, and writing it clears the note.
import { useSyncExternalStore } from 'react';
import { tabletVault, type DataKeyVault, type DamagedValue } from '../data/crypto/data-key-vault';

/** "patient 0190…" as a person reads it: the kind of record and the end of its id. */
function whatWasDamaged(value: DamagedValue): string {
  const [first, second] = value.key.split(' ');
  if (value.table === 'records' && second)
    return `a ${first} record (id ending ${second.slice(-6)})`;
  if (value.table === 'outbox') return `an unsent edit (change id ending ${value.key.slice(-6)})`;
  if (value.table === 'files') return `an attachment file (id ending ${value.key.slice(-6)})`;
  return `a stored value (${value.table}, ${value.key.slice(-6)})`;
}

/** The damaged values in words, one line each; empty when there is nothing to say. */
export function damagedValueLines(values: readonly DamagedValue[]): string[] {
  return values.map((value) => {
    const what = whatWasDamaged(value);
    if (value.table === 'records') {
      return `Part of this tablet’s copy of ${what} could not be read: it was altered or damaged in the tablet’s storage, so it is not shown. Nothing else is affected, and unsent edits stay in the Outbox. The next sync fetches a good copy from the clinic server.`;
    }
    if (value.table === 'outbox') {
      return `Part of ${what} could not be read: it was altered or damaged in the tablet’s storage, so it cannot be sent. Everything else is sent as usual; tell the clinic’s admin, and enter that edit again if it is missing on the server.`;
    }
    return `Part of ${what} could not be read: it was altered or damaged in the tablet’s storage, so it is not shown. Nothing else is affected; the file is fetched from the clinic server again when it is opened, if the server holds it.`;
  });
}

export function useDamagedValues(vault: DataKeyVault = tabletVault): readonly DamagedValue[] {
  return useSyncExternalStore(
    (listener) => vault.subscribe(listener),
    () => vault.damagedValues(),
  );
}

export function DamagedValuesNote(props: { vault?: DataKeyVault }) {
  const lines = damagedValueLines(useDamagedValues(props.vault));
  if (lines.length === 0) return null;
  return (
    <section aria-label="Damaged data on this tablet" className="fl-storage-banner">
      <span className="fl-storage-banner__mark" aria-hidden="true">
        ⚠
      </span>
      <div role="alert">
        {lines.map((line) => (
          <p key={line}>{line}</p>
        ))}
      </div>
    </section>
  );
}
