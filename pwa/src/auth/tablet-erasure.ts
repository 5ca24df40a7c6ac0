// Wiping a tablet that the clinic revoked or retired: every IndexedDB database of the app goes
// (records, Outbox, identity), and a short note of why is kept in localStorage so that the
// screen can still say so after a reload. The note holds no personal data.
import Dexie from 'dexie';
import { tabletVault } from '../data/crypto/data-key-vault';

const ERASURE_NOTE_KEY = 'fuselight.erasure';

export type ErasureCause = 'revoked' | 'retired';

export interface ErasureNote {
  cause: ErasureCause;
  message: string;
  at: number;
}

/** Deletes every IndexedDB database on this origin. Open Dexie connections close themselves. */
export async function eraseAllDatabases(): Promise<string[]> {
  const names = await Dexie.getDatabaseNames();
  for (const name of names) await Dexie.delete(name);
  // The key slots went with the databases: the key in memory is of no further use.
  tabletVault.reset();
  return names;
}

export function writeErasureNote(note: ErasureNote): void {
  try {
    localStorage.setItem(ERASURE_NOTE_KEY, JSON.stringify(note));
  } catch {
    // Private mode or a full quota: the screen still says why for this visit.
  }
}

export function readErasureNote(): ErasureNote | null {
  try {
    const raw = localStorage.getItem(ERASURE_NOTE_KEY);
    return raw ? (JSON.parse(raw) as ErasureNote) : null;
  } catch {
    return null;
  }
}

export function clearErasureNote(): void {
  try {
    localStorage.removeItem(ERASURE_NOTE_KEY);
  } catch {
    // Nothing to clear.
  }
}
