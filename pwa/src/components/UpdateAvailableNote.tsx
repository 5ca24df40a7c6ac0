// On the You screen: this tablet holds records from a newer version of the app (kept as they
// came, docs/sync-protocol.md, Records a device does not know), so an update is available; with
// a button that looks for the new version at once.
import { useState } from 'react';
import { describeUpdateCheck, lookForAppUpdate, type UpdateCheck } from '../app/app-update';
import { describeNewerRecords, type NewerRecordsNote } from '../sync';

export function UpdateAvailableNote(props: {
  note: NewerRecordsNote | null;
  /** How to look for the new version (the service worker's, unless a test gives another). */
  lookForUpdate?: () => Promise<UpdateCheck>;
}) {
  const [check, setCheck] = useState<UpdateCheck | 'looking' | null>(null);
  const words = describeNewerRecords(props.note);
  if (!words) return null;
  const look = async () => {
    setCheck('looking');
    setCheck(await (props.lookForUpdate ?? lookForAppUpdate)());
  };
  return (
    <section aria-label="Update available">
      <h2 style={{ fontSize: '1.1rem' }}>Update available</h2>
      <p>{words}</p>
      <button
        className="fl-button"
        type="button"
        disabled={check === 'looking'}
        onClick={() => void look()}
        style={{ minHeight: 48, padding: '0 16px' }}
      >
        {check === 'looking' ? 'Looking for the new version…' : 'Look for the new version'}
      </button>
      <p role="status" aria-live="polite">
        {check && check !== 'looking' ? describeUpdateCheck(check) : ''}
      </p>
    </section>
  );
}
