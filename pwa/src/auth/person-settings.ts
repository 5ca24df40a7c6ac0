// Each person's own settings on this tablet (their Bench keys, for one), kept in the auth
// database's settings table under the person's id, so they hold offline and follow whoever is
// using the tablet. Screens read them through usePersonSetting; the cache here keeps every
// screen that shows a setting in step with a write made elsewhere.
import { useCallback, useEffect, useMemo, useSyncExternalStore } from 'react';
import { AuthDb } from './auth-db';

export const personSettingKey = (userId: string, name: string) => `person:${userId}:${name}`;

type Entry = { loaded: false } | { loaded: true; value: unknown };
const NOT_LOADED: Entry = { loaded: false };

export class PersonSettings {
  private readonly cache = new Map<string, Entry>();
  private readonly listeners = new Set<() => void>();
  private readonly loading = new Map<string, Promise<void>>();
  private openedDb: AuthDb | null = null;

  constructor(private readonly openDb: () => AuthDb = () => new AuthDb()) {}

  private get db(): AuthDb {
    this.openedDb ??= this.openDb();
    return this.openedDb;
  }

  subscribe = (listener: () => void): (() => void) => {
    this.listeners.add(listener);
    return () => this.listeners.delete(listener);
  };

  private publish(): void {
    for (const listener of this.listeners) listener();
  }

  /** What is known now: undefined until read from the database, then the stored value (or null). */
  peek(userId: string, name: string): Entry {
    return this.cache.get(personSettingKey(userId, name)) ?? NOT_LOADED;
  }

  load(userId: string, name: string): Promise<void> {
    const key = personSettingKey(userId, name);
    if (this.cache.get(key)?.loaded) return Promise.resolve();
    const pending = this.loading.get(key);
    if (pending) return pending;
    const read = this.db.settings
      .get(key)
      .then((row) => {
        // A write made while this read was on its way wins.
        if (!this.cache.get(key)?.loaded)
          this.cache.set(key, { loaded: true, value: row?.value ?? null });
      })
      .catch(() => {
        // Storage refused (a private window): the defaults apply and writes still show.
        if (!this.cache.get(key)?.loaded) this.cache.set(key, { loaded: true, value: null });
      })
      .finally(() => {
        this.loading.delete(key);
        this.publish();
      });
    this.loading.set(key, read);
    return read;
  }

  /** Shows the value at once and resolves once it is stored on the tablet. */
  async write(userId: string, name: string, value: unknown): Promise<void> {
    const key = personSettingKey(userId, name);
    this.cache.set(key, { loaded: true, value });
    this.publish();
    await this.db.settings.put({ key, value });
  }
}

let defaultSettings: PersonSettings | null = null;
export function getPersonSettings(): PersonSettings {
  defaultSettings ??= new PersonSettings();
  return defaultSettings;
}
export function setPersonSettings(settings: PersonSettings | null): void {
  defaultSettings = settings;
}

/**
 * One setting of the person using the tablet, parsed by `parse` (which also supplies the
 * default for a value never stored). `loaded` is false until the tablet has read it.
 */
export function usePersonSetting<T>(
  userId: string | null | undefined,
  name: string,
  parse: (stored: unknown) => T,
): { value: T; loaded: boolean; save: (value: T) => Promise<void> } {
  const settings = getPersonSettings();
  const entry = useSyncExternalStore(settings.subscribe, () =>
    userId ? settings.peek(userId, name) : NOT_LOADED,
  );
  useEffect(() => {
    if (userId) void settings.load(userId, name);
  }, [settings, userId, name]);
  const save = useCallback(
    async (value: T) => {
      if (!userId) throw new Error('Nobody is signed in on this tablet: the setting has no owner');
      await settings.write(userId, name, value);
    },
    [settings, userId, name],
  );
  // Parsed once per stored value, so the result keeps its identity between renders.
  const value = useMemo(() => parse(entry.loaded ? entry.value : null), [entry, parse]);
  return { value, loaded: entry.loaded, save };
}
