// The person using the tablet: their site, their PIN, handing the tablet over, signing out.
import { useQuery } from '@tanstack/react-query';
import { useState } from 'react';
import { useNavigate } from 'react-router-dom';
import { canSee } from '../../auth/access';
import { useSession } from '../../auth/session-context';
import { useAuthState } from '../../auth/SessionProvider';
import { countOutboxEntries } from '../../auth/outbox-count';
import { siteLabel } from '../../auth/site-names';
import { useAuthActions } from '../../auth/useAuthActions';
import { Button, Confirmation, SelectField } from '../../auth/ui/controls';
import { IdentityPage } from '../../auth/ui/IdentityPage';
import { UpdateAvailableNote } from '../../components/UpdateAvailableNote';
import { describeFullRepull, useSyncStatus, type FullRepull, type TabRole } from '../../sync';
import { queryKeys } from '../../data/query-keys';
import { describeSiteRemoval } from '../../data/site-scope';
import { describeUsage, type StorageHealth } from '../../storage/storage-health';
import { useStorageHealth } from '../../storage/useStorageHealth';
import { BenchKeysSettings } from './BenchKeysSettings';
import './bench-keys.css';

/** The tablet's full re-syncs in words: under way, the last one done, or none needed yet. */
export function FullRepullNote(props: { repull: FullRepull | null }) {
  const text = describeFullRepull(props.repull, (ms) => new Date(ms).toLocaleString());
  return (
    <section aria-label="Full re-sync">
      <h2 style={{ fontSize: '1.1rem' }}>Sync on this tablet</h2>
      <p role="status" aria-live="polite">
        {text ?? 'No full re-sync has been needed on this tablet.'}
      </p>
    </section>
  );
}

/** Which tab syncs, when this tablet has the app open in several tabs. */
function tabRoleWords(role: TabRole): string | null {
  switch (role) {
    case 'alone':
      return null;
    case 'leading':
      return 'This tab syncs the tablet for every tab of Fuselight open on it.';
    case 'following':
      return 'Another tab of Fuselight syncs this tablet; this one shows what it sends and receives.';
  }
}

/**
 * The tablet's storage: persistent or not (a browser may clear storage that is not), how much is
 * used of the quota, and a warning from 80 % (storage-health.ts).
 */
export function StorageNote(props: { health: StorageHealth | undefined; failed?: boolean }) {
  const { health } = props;
  let persistence: string;
  if (props.failed) persistence = 'The browser could not be asked about this tablet’s storage.';
  else if (!health) persistence = 'Reading this tablet’s storage…';
  else if (health.persisted === true)
    persistence =
      'Persistent storage: granted. The browser keeps what is stored on this tablet until Fuselight removes it.';
  else if (health.persisted === false)
    persistence =
      'Persistent storage: not granted. The browser may clear what is stored on this tablet, unsent edits included, when space runs short or after days without use; sync often.';
  else persistence = 'This browser cannot say whether it keeps this tablet’s storage; sync often.';
  const percent = health?.usedShare != null ? Math.round(health.usedShare * 100) : null;
  return (
    <section aria-label="Storage on this tablet">
      <h2 style={{ fontSize: '1.1rem' }}>Storage on this tablet</h2>
      <p>{persistence}</p>
      {health ? <p>{describeUsage(health)}</p> : null}
      {health?.nearlyFull && percent !== null ? (
        <p role="alert">
          {`The storage is ${percent} % full. When it is full, edits cannot be saved: sync to send the Outbox, and free space on the tablet.`}
        </p>
      ) : null}
    </section>
  );
}

export default function PersonScreen() {
  const { user, activeSiteId, deviceId } = useSession();
  const { people, policy, sites } = useAuthState();
  const actions = useAuthActions();
  const navigate = useNavigate();
  const sync = useSyncStatus();
  const storage = useStorageHealth();
  const [confirmingSignOut, setConfirmingSignOut] = useState(false);
  const waiting = useQuery({
    queryKey: queryKeys.identity.waitingChanges(user?.id ?? ''),
    queryFn: () => countOutboxEntries(user!.id),
    enabled: !!user,
  });
  if (!user) return null;
  const me = people.find((p) => p.user.id === user.id);
  const waitingCount = waiting.data ?? 0;

  return (
    <IdentityPage title="You">
      <p>
        Signed in as <strong>{user.name}</strong> ({user.email}), {user.role}.
      </p>
      {user.siteIds.length > 1 ? (
        <SelectField
          label="Site you are working at"
          value={activeSiteId ?? ''}
          onChange={(e) => void actions.setActiveSite(e.target.value)}
        >
          {user.siteIds.map((id, index) => (
            <option key={id} value={id}>
              {siteLabel(sites, id, index)}
            </option>
          ))}
        </SelectField>
      ) : user.siteIds[0] ? (
        <p>Working at {siteLabel(sites, user.siteIds[0], 0)}.</p>
      ) : null}
      {deviceId ? (
        <p>
          {me?.hasPin
            ? `Your PIN unlocks this tablet offline until ${new Date(me.unlockWindowEndsAt).toLocaleString()}.`
            : 'You have no PIN on this tablet yet.'}{' '}
          The clinic allows {policy.offlineUnlockHours} hours offline.
        </p>
      ) : null}
      {deviceId ? <FullRepullNote repull={sync.fullRepull} /> : null}
      {deviceId && sync.siteRemoval ? (
        <p role="status">
          {describeSiteRemoval(sync.siteRemoval)}{' '}
          {`(${new Date(sync.siteRemoval.at).toLocaleString()})`}
        </p>
      ) : null}
      {deviceId ? <UpdateAvailableNote note={sync.newerRecords} /> : null}
      {deviceId && tabRoleWords(sync.tabRole) ? <p>{tabRoleWords(sync.tabRole)}</p> : null}
      {deviceId ? <StorageNote health={storage.data} failed={storage.isError} /> : null}
      {canSee(user.role, 'clinical') ? <BenchKeysSettings /> : null}
      <div className="fl-id-row">
        {deviceId ? (
          <Button tone="quiet" onClick={() => navigate('/pin')}>
            {me?.hasPin ? 'Change PIN' : 'Set a PIN'}
          </Button>
        ) : null}
        <Button onClick={() => void actions.switchPerson()}>Switch person</Button>
        <Button tone="danger" onClick={() => setConfirmingSignOut(true)}>
          Sign out
        </Button>
      </div>
      {confirmingSignOut ? (
        <Confirmation
          title="Sign out of this tablet?"
          confirmLabel="Sign out"
          onCancel={() => setConfirmingSignOut(false)}
          onConfirm={() => void actions.signOut()}
        >
          {waitingCount > 0
            ? `${waitingCount} of your changes have not been sent yet. They stay in the Outbox and are sent after you next sign in on this tablet.`
            : 'Everything of yours has been sent. Your PIN on this tablet is removed.'}
        </Confirmation>
      ) : null}
    </IdentityPage>
  );
}
