// The tablet's storage as the browser sees it. A browser may clear a site's storage when it runs
// short of space or when the site goes unused (Safari does after days without use), unless the
// site was granted persistent storage; with it goes the Outbox. So the tablet asks for
// persistent storage at enrolment (navigator.storage.persist()), and the You screen and the
// app-wide warning show whether it was granted and how full the storage is
// (navigator.storage.estimate()).

/** The part of the StorageManager used here; any of it may be missing in an older browser. */
export interface BrowserStorage {
  persist?: () => Promise<boolean>;
  persisted?: () => Promise<boolean>;
  estimate?: () => Promise<{ usage?: number; quota?: number }>;
}

/** Share of the quota from which the tablet warns that its storage is nearly full. */
export const STORAGE_WARN_SHARE = 0.8;

export interface StorageHealth {
  /** The browser can say whether storage is persistent (and be asked for it). */
  persistenceSupported: boolean;
  /** Granted (true), not granted (false), or unknown (null: the browser cannot say). */
  persisted: boolean | null;
  /** Bytes this site uses and may use, when the browser says. */
  usage: number | null;
  quota: number | null;
  /** usage / quota, between 0 and 1; null when either is unknown. */
  usedShare: number | null;
  /** At or above STORAGE_WARN_SHARE of the quota. */
  nearlyFull: boolean;
}

export function browserStorage(): BrowserStorage | null {
  if (typeof navigator === 'undefined') return null;
  return (navigator as Navigator & { storage?: BrowserStorage }).storage ?? null;
}

/**
 * Asks the browser to keep this site's storage (at enrolment). Resolves to the answer, or null
 * when the browser cannot be asked; never throws (a refusal is shown, not an error).
 */
export async function askForPersistentStorage(
  storage: BrowserStorage | null = browserStorage(),
): Promise<boolean | null> {
  if (typeof storage?.persist !== 'function') return null;
  try {
    return await storage.persist();
  } catch {
    return false;
  }
}

export function usedShareOf(usage: number | null, quota: number | null): number | null {
  if (usage === null || quota === null || quota <= 0) return null;
  return Math.min(1, Math.max(0, usage / quota));
}

/** Reads persistence and usage now; what the browser cannot say comes back as null. */
export async function readStorageHealth(
  storage: BrowserStorage | null = browserStorage(),
): Promise<StorageHealth> {
  const persistenceSupported = typeof storage?.persisted === 'function';
  const [persisted, estimate] = await Promise.all([
    persistenceSupported ? storage!.persisted!().catch(() => null) : Promise.resolve(null),
    typeof storage?.estimate === 'function'
      ? storage.estimate().catch(() => null)
      : Promise.resolve(null),
  ]);
  const usage = typeof estimate?.usage === 'number' ? estimate.usage : null;
  const quota = typeof estimate?.quota === 'number' ? estimate.quota : null;
  const usedShare = usedShareOf(usage, quota);
  return {
    persistenceSupported,
    persisted,
    usage,
    quota,
    usedShare,
    nearlyFull: usedShare !== null && usedShare >= STORAGE_WARN_SHARE,
  };
}

/** "512 bytes", "340 kB", "12.5 MB", "1.2 GB" (decimal units, as browsers report quotas). */
export function describeBytes(bytes: number): string {
  if (bytes < 1000) return `${bytes} bytes`;
  const units = ['kB', 'MB', 'GB', 'TB'];
  let value = bytes;
  let unit = -1;
  while (value >= 1000 && unit < units.length - 1) {
    value /= 1000;
    unit += 1;
  }
  const digits = value >= 100 ? 0 : 1;
  return `${value.toFixed(digits)} ${units[unit]}`;
}

/** "12 % of 10.7 GB used (1.3 GB)", or what the browser does not say, in words. */
export function describeUsage(health: StorageHealth): string {
  if (health.usage === null || health.quota === null || health.usedShare === null) {
    return 'This browser does not say how much storage Fuselight uses.';
  }
  const percent = Math.round(health.usedShare * 100);
  return `${describeBytes(health.usage)} used of ${describeBytes(health.quota)} (${percent} %).`;
}
