// Sites a tablet no longer serves (docs/sync-protocol.md): at each contact the server names the
// sites whose records the tablet may hold now (`holdSiteIds` of GET /api/devices/me and of the
// heartbeat's answer). Records of any other site are deleted here, with their attachment files,
// while every Outbox entry stays until the server has answered it (pushed, or rejected and then
// corrected or discarded by its author), and a file not yet uploaded stays until it is. What was
// removed is noted in `meta` and said in words on the sync bar and the You screen. A site that
// comes back starts a full re-pull, since the cursor is past its records.
import type { CollectionName } from '@fuselight/shared';
import type { AttachmentDb } from '../attachments/attachment-db';
import type { FuselightDb, StoredRecord } from './db';
import { notifyDataChange } from './data-events';

/** `meta` key of what the tablet knows of its sites: what it may hold and what it removed. */
export const SITE_SCOPE_KEY = 'siteScope';

/** The last removal, for the screens. */
export interface SiteRemovalNote {
  siteIds: string[];
  /** The sites' names when the tablet knew them (never clinical). */
  siteNames: string[];
  records: number;
  attachments: number;
  letters: number;
  /** Outbox entries of those sites still waiting for the server's answer. */
  keptEdits: number;
  /** Attachment files of those sites not yet uploaded, kept until they are. */
  keptFiles: number;
  at: number;
}

export interface SiteScope {
  /** The sites the server last said this tablet may hold. */
  holdSiteIds: string[];
  /** Sites whose records were removed and that have not come back: a pull does not store them. */
  removedSiteIds: string[];
  lastRemoval: SiteRemovalNote | null;
}

function isSiteScope(value: unknown): value is SiteScope {
  if (typeof value !== 'object' || value === null) return false;
  const v = value as Record<string, unknown>;
  return Array.isArray(v.holdSiteIds) && Array.isArray(v.removedSiteIds);
}

export async function readSiteScope(db: FuselightDb): Promise<SiteScope | null> {
  const value = (await db.meta.get(SITE_SCOPE_KEY))?.value;
  return isSiteScope(value) ? value : null;
}

/** Sites whose pulled records are not stored (removed, and not given back since). */
export async function removedSites(db: FuselightDb): Promise<ReadonlySet<string>> {
  return new Set((await readSiteScope(db))?.removedSiteIds ?? []);
}

export interface ApplySiteScopeOptions {
  db: FuselightDb;
  files: AttachmentDb;
  holdSiteIds: readonly string[];
  /** A site's name for the words, when the tablet knows it. */
  siteName?: (siteId: string) => string | null;
  nowMs: number;
  /** Records read at a time (the records table is sealed: read by key, never by cursor). */
  chunkSize?: number;
  /** Starts a full re-pull when a removed site comes back (the sync engine's, by default none). */
  onSiteRegained?: (siteIds: string[]) => Promise<void>;
}

export interface SiteScopeOutcome {
  removal: SiteRemovalNote | null;
  regained: string[];
}

const siteOf = (record: StoredRecord | undefined): string | null => {
  const siteId = record?.fields.siteId;
  return typeof siteId === 'string' ? siteId : null;
};

/**
 * Deletes what the tablet holds of sites outside `holdSiteIds`. The whole table is read only when
 * the server's list lost a site since the last contact (or on the first contact with a server
 * that sends it); otherwise only the note is kept current.
 */
export async function applySiteScope(options: ApplySiteScopeOptions): Promise<SiteScopeOutcome> {
  const { db } = options;
  const hold = new Set(options.holdSiteIds);
  const before = await readSiteScope(db);
  const removedBefore = new Set(before?.removedSiteIds ?? []);
  const regained = [...removedBefore].filter((id) => hold.has(id));
  const lostSinceLast = before === null || before.holdSiteIds.some((id) => !hold.has(id));
  let removal: SiteRemovalNote | null = null;
  if (lostSinceLast) removal = await removeOutside(options, hold);
  const removedNow = new Set([...removedBefore].filter((id) => !hold.has(id)));
  for (const id of removal?.siteIds ?? []) removedNow.add(id);
  const scope: SiteScope = {
    holdSiteIds: [...hold].sort(),
    removedSiteIds: [...removedNow].sort(),
    lastRemoval: removal ?? before?.lastRemoval ?? null,
  };
  await db.meta.put({ key: SITE_SCOPE_KEY, value: scope });
  if (regained.length > 0) await options.onSiteRegained?.(regained);
  if (removal) {
    notifyDataChange({ collections: [], outbox: false });
    for (const listener of [...removalListeners]) listener(removal);
  }
  return { removal, regained };
}

async function removeOutside(
  options: ApplySiteScopeOptions,
  hold: ReadonlySet<string>,
): Promise<SiteRemovalNote | null> {
  const { db, files } = options;
  const chunkSize = options.chunkSize ?? 500;
  // The primary key is [collection, id]; Dexie's typing names it by `id` only.
  const keys = await db.records.toCollection().primaryKeys();
  const lost: StoredRecord[] = [];
  for (let start = 0; start < keys.length; start += chunkSize) {
    const rows = await db.records.bulkGet(keys.slice(start, start + chunkSize));
    for (const row of rows) {
      const siteId = siteOf(row);
      if (row && siteId !== null && !hold.has(siteId)) lost.push(row);
    }
  }
  if (lost.length === 0) return null;
  const siteIds = [...new Set(lost.map((r) => siteOf(r) as string))].sort();
  const lostIds = new Set(lost.map((r) => r.id));
  const attachmentIds = lost.filter((r) => r.collection === 'attachment').map((r) => r.id);
  // Files not yet on the server are unsent work: they stay until they are uploaded.
  const transfers = await files.transfers.bulkGet(attachmentIds);
  const unsent = new Set(
    transfers
      .filter((t): t is NonNullable<typeof t> => !!t && t.state === 'waiting')
      .map((t) => t.attachmentId),
  );
  const filesToDelete = attachmentIds.filter((id) => !unsent.has(id));
  await files.transaction('rw', [files.files, files.transfers], async () => {
    await files.files.bulkDelete(filesToDelete);
    await files.transfers.bulkDelete(filesToDelete);
  });
  let keptEdits = 0;
  await db.transaction('rw', [db.records, db.outbox], async () => {
    const entries = await db.outbox.toArray();
    keptEdits = entries.filter((e) => lostIds.has(e.recordId)).length;
    await db.records.bulkDelete(
      lost.map((r) => [r.collection, r.id] as [CollectionName, string] as unknown as string),
    );
  });
  notifyDataChange({
    collections: [...new Set(lost.map((r) => r.collection))],
    recordIds: [...lostIds],
    outbox: false,
  });
  return {
    siteIds,
    siteNames: siteIds.map((id) => options.siteName?.(id) ?? `the site ending ${id.slice(-6)}`),
    records: lost.length,
    attachments: attachmentIds.length,
    letters: lost.filter((r) => r.collection === 'letter').length,
    keptEdits,
    keptFiles: unsent.size,
    at: options.nowMs,
  };
}

/** The removal in words, for the sync bar and the You screen. */
export function describeSiteRemoval(note: SiteRemovalNote | null): string | null {
  if (!note) return null;
  const names =
    note.siteNames.length === 1
      ? note.siteNames[0]
      : `${note.siteNames.slice(0, -1).join(', ')} and ${note.siteNames.at(-1)}`;
  const serves = note.siteNames.length === 1 ? 'that site' : 'those sites';
  let words = `Records of ${names} were removed from this tablet because it no longer serves ${serves}`;
  const parts: string[] = [];
  if (note.attachments > 0)
    parts.push(`${note.attachments} attachment${note.attachments === 1 ? '' : 's'}`);
  if (note.letters > 0) parts.push(`${note.letters} letter${note.letters === 1 ? '' : 's'}`);
  words += parts.length > 0 ? ` (with ${parts.join(' and ')})` : '';
  words += '.';
  if (note.keptEdits > 0) {
    words += ` ${note.keptEdits} unsent edit${note.keptEdits === 1 ? ' is' : 's are'} kept until ${note.keptEdits === 1 ? 'it reaches' : 'they reach'} the server.`;
  }
  if (note.keptFiles > 0) {
    words += ` ${note.keptFiles} file${note.keptFiles === 1 ? '' : 's'} not yet uploaded ${note.keptFiles === 1 ? 'is' : 'are'} kept until ${note.keptFiles === 1 ? 'it is' : 'they are'} sent.`;
  }
  return words;
}

type RemovalListener = (note: SiteRemovalNote) => void;
const removalListeners = new Set<RemovalListener>();

/** Told of each removal (the sync status shows it). */
export function subscribeSiteRemoval(listener: RemovalListener): () => void {
  removalListeners.add(listener);
  return () => {
    removalListeners.delete(listener);
  };
}
