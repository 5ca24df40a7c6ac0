// Always visible: whether the tablet is online, what waits in the Outbox, when it last synced,
// a long pull's progress and any problem in words, with a "Sync now" button; and that an update
// of the app is available when it holds records from a newer build (sync/newer-records.ts).
import { IonSpinner } from '@ionic/react';
import {
  cloudDoneOutline,
  cloudOfflineOutline,
  cloudOutline,
  syncOutline,
  warningOutline,
} from 'ionicons/icons';
import { useEffect, useState } from 'react';
import { describeSiteRemoval } from '../data/site-scope';
import {
  describeFullRepull,
  describeNewerRecords,
  requestSyncNow,
  UPDATE_AVAILABLE_SHORT,
  useSyncStatus,
  type SyncEngine,
  type SyncStatus,
} from '../sync';
import { formatCount } from '../sync/format-count';
import { Glyph } from './Glyph';
import './sync-indicator.css';

/** "just now", "3 min ago", "at 09:41", or "on 1 Dec" for an older time. */
export function describeLastSynced(lastSyncedAt: number | null, nowMs: number): string {
  if (lastSyncedAt === null) return 'Not synced yet';
  const ago = Math.max(0, nowMs - lastSyncedAt);
  if (ago < 60_000) return 'Synced just now';
  if (ago < 60 * 60_000) return `Synced ${Math.floor(ago / 60_000)} min ago`;
  const at = new Date(lastSyncedAt);
  const sameDay = new Date(nowMs).toDateString() === at.toDateString();
  return sameDay
    ? `Synced at ${at.toLocaleTimeString(undefined, { hour: '2-digit', minute: '2-digit' })}`
    : `Synced on ${at.toLocaleDateString(undefined, { day: 'numeric', month: 'short' })}`;
}

export function describeOutbox(status: SyncStatus): string {
  if (status.outboxCount === 0) return 'Outbox empty';
  const waiting = `${status.pendingCount} waiting`;
  return status.rejectedCount > 0 ? `${waiting}, ${status.rejectedCount} refused` : waiting;
}

/**
 * Whether other tablets' changes arrive as they are made (the live stream is open) or only on the
 * 30-second check; null offline or before sync is set up.
 */
export function describeLive(status: SyncStatus): string | null {
  if (!status.configured || !status.online || status.live === 'off') return null;
  return status.live === 'live' ? 'Live' : 'Checking every 30 s';
}

/** How long the bar still says a full re-sync finished. */
const REPULL_DONE_SHOWN_MS = 10 * 60_000;

const clockTime = (ms: number) =>
  new Date(ms).toLocaleTimeString(undefined, { hour: '2-digit', minute: '2-digit' });

/** A full re-sync under way, or one that ended in the last few minutes; null otherwise. */
export function describeRepullForBar(
  status: SyncStatus,
  nowMs: number,
  compact: boolean,
): string | null {
  const repull = status.fullRepull;
  if (!repull) return null;
  if (repull.finishedAt !== null && nowMs - repull.finishedAt > REPULL_DONE_SHOWN_MS) return null;
  if (compact) {
    return repull.finishedAt === null
      ? `Full re-sync: ${formatCount(repull.received)} received`
      : `Full re-sync done`;
  }
  return describeFullRepull(repull, clockTime);
}

/**
 * What the bar's icon says. A sync that has not started (no enrolment or nobody signed in yet) is
 * a state to explain, not a problem: only a failure of a running sync gets the warning sign.
 */
export type SyncLook = 'offline' | 'not-started' | 'problem' | 'ok';

export function syncLookOf(status: SyncStatus): SyncLook {
  if (!status.online) return 'offline';
  if (!status.configured) return 'not-started';
  return status.error ? 'problem' : 'ok';
}

const LOOK_ICONS: Record<SyncLook, string> = {
  offline: cloudOfflineOutline,
  'not-started': cloudOutline,
  problem: warningOutline,
  ok: cloudDoneOutline,
};

function describeProgress(status: SyncStatus): string | null {
  const progress = status.progress;
  if (!progress) return null;
  if (progress.step === 'push') return `Sending ${progress.done} of ${progress.total ?? '?'}`;
  return `Receiving: ${formatCount(progress.done)} records so far`;
}

export function SyncIndicator(props: {
  engine?: SyncEngine | null;
  onSyncNow?: () => unknown;
  /** One line for the shell's bar: the error is shortened, the full words stay in the label. */
  compact?: boolean;
}) {
  const status = useSyncStatus(props.engine);
  const [nowMs, setNowMs] = useState(() => Date.now());
  useEffect(() => {
    const timer = setInterval(() => setNowMs(Date.now()), 30_000);
    return () => clearInterval(timer);
  }, []);
  const busy = status.phase === 'pushing' || status.phase === 'pulling';
  const look = syncLookOf(status);
  // Why sync has not started is said in muted words; only a running sync's failure is an alert.
  const problem = look === 'problem' ? status.error : null;
  const note = look === 'not-started' ? status.error : null;
  const progress = describeProgress(status);
  const repull = describeRepullForBar(status, nowMs, props.compact === true);
  const newer = describeNewerRecords(status.newerRecords);
  const live = describeLive(status);
  // Records of a site this tablet no longer serves were removed: said for a while after.
  const removal =
    status.siteRemoval && nowMs - status.siteRemoval.at <= REPULL_DONE_SHOWN_MS
      ? describeSiteRemoval(status.siteRemoval)
      : null;
  const syncNow = () => {
    if (props.onSyncNow) void props.onSyncNow();
    else if (props.engine) void props.engine.syncNow();
    else void requestSyncNow();
  };
  return (
    <section
      aria-label={`Sync status: ${status.online ? 'online' : 'offline'}${live === 'Live' ? ', changes arrive live' : ''}, ${describeOutbox(status)}, ${describeLastSynced(status.lastSyncedAt, nowMs)}${status.error ? `. ${status.error}` : ''}${newer ? `. ${newer}` : ''}`}
      className={
        props.compact ? 'fl-sync-indicator fl-sync-indicator--compact' : 'fl-sync-indicator'
      }
      style={
        props.compact
          ? undefined
          : {
              display: 'flex',
              flexWrap: 'wrap',
              alignItems: 'center',
              gap: 12,
              padding: '4px 12px',
              borderBottom: '1px solid var(--fl-border)',
              background: 'var(--fl-surface)',
            }
      }
    >
      <span
        role="status"
        aria-live="polite"
        style={{ display: 'flex', alignItems: 'center', gap: 6 }}
      >
        <Glyph icon={LOOK_ICONS[look]} data-look={look} />
        <strong>{status.online ? 'Online' : 'Offline'}</strong>
        {live ? (
          <span
            className="fl-sync-live"
            title={
              live === 'Live'
                ? 'Changes made on other tablets arrive as they are made'
                : 'The live connection is down: this tablet checks for changes every 30 seconds'
            }
          >
            · {live}
          </span>
        ) : null}
        <span>· {look === 'not-started' ? 'Sync not started' : describeOutbox(status)}</span>
        {props.compact ? null : (
          <span className="fl-muted">· {describeLastSynced(status.lastSyncedAt, nowMs)}</span>
        )}
        {progress ? <span>· {progress}</span> : null}
        {repull ? <span className="fl-sync-repull">· {repull}</span> : null}
        {removal ? (
          <span className="fl-sync-repull" title={removal}>
            · {props.compact ? 'Records of a site removed' : removal}
          </span>
        ) : null}
        {newer ? (
          <span className="fl-sync-update" title={newer}>
            · {UPDATE_AVAILABLE_SHORT}
          </span>
        ) : null}
      </span>
      {note ? (
        <span
          className={props.compact ? 'fl-muted fl-sync-indicator__short' : 'fl-muted'}
          title={note}
          style={props.compact ? undefined : { flex: '1 1 16rem' }}
        >
          {note}
        </span>
      ) : props.compact ? (
        problem ? (
          <span role="alert" title={problem} className="fl-sync-indicator__short">
            {problem}
          </span>
        ) : null
      ) : problem ? (
        <span role="alert" style={{ flex: '1 1 16rem', color: 'var(--ion-color-danger, #b00020)' }}>
          {problem}
        </span>
      ) : (
        <span style={{ flex: '1 1 0' }} />
      )}
      <button
        className="fl-button"
        type="button"
        aria-label={busy ? 'Syncing now' : 'Sync now'}
        disabled={busy || !status.online}
        onClick={syncNow}
        style={{
          minHeight: 48,
          // Wide enough for "Syncing…" and "Sync now" alike: the button keeps its place.
          minWidth: '8.5rem',
          padding: '0 16px',
          fontSize: '1rem',
          borderRadius: 8,
        }}
      >
        {busy ? <IonSpinner name="crescent" aria-hidden="true" /> : <Glyph icon={syncOutline} />}
        {busy ? 'Syncing…' : 'Sync now'}
      </button>
    </section>
  );
}
