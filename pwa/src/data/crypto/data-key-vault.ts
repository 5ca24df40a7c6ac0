// The tablet's data key while it is unlocked, and nothing else: the key is held in memory only
// (never stored in the clear), dropped on lock, and read by the sealing middleware of every
// database that keeps patient data (docs/threat-model.md). A database whose key slots exist is
// "protected": from then on nothing may be written to it in the clear, and reading a sealed
// value needs the key.

/** The tablet is locked: patient data cannot be read or written until someone unlocks it. */
export class TabletLockedError extends Error {
  override readonly name = 'TabletLockedError';
  constructor() {
    super('This tablet is locked: unlock it with your PIN to read or change patient data.');
  }
}

/** A stored value failed authentication: it was altered or damaged on this tablet. */
export interface DamagedValue {
  database: string;
  table: string;
  /** The value's primary key, in words (e.g. "patient 0190…"). */
  key: string;
  at: number;
}

export class DataKeyVault {
  private key: CryptoKey | null = null;
  private protectedFlag = false;
  private readonly listeners = new Set<() => void>();
  private readonly damaged = new Map<string, DamagedValue>();
  /** The same list, rebuilt only when it changes (a stable snapshot for React). */
  private damagedList: readonly DamagedValue[] = [];

  /** The data key, or null while locked. */
  get dataKey(): CryptoKey | null {
    return this.key;
  }

  get unlocked(): boolean {
    return this.key !== null;
  }

  /** True once a key slot exists: nothing may be written in the clear any more. */
  get isProtected(): boolean {
    return this.protectedFlag;
  }

  markProtected(value = true): void {
    this.protectedFlag = value;
    this.emit();
  }

  /** Holds the unwrapped data key (after an unlock or when the key is first made). */
  hold(key: CryptoKey): void {
    this.key = key;
    this.protectedFlag = true;
    this.emit();
  }

  /** Drops the key from memory: sealed values can no longer be read until the next unlock. */
  lock(): void {
    if (!this.key) return;
    this.key = null;
    this.emit();
  }

  /** Forgets everything (after a crypto-erase). */
  reset(): void {
    this.key = null;
    this.protectedFlag = false;
    this.damaged.clear();
    this.damagedList = [];
    this.emit();
  }

  /** The key for writing: null means "write in the clear" (a tablet not yet protected). */
  keyForWriting(): CryptoKey | null {
    if (this.key) return this.key;
    if (this.protectedFlag) throw new TabletLockedError();
    return null;
  }

  /** The key for reading a sealed value. */
  keyForReading(): CryptoKey {
    if (!this.key) throw new TabletLockedError();
    return this.key;
  }

  reportDamaged(value: DamagedValue): void {
    const id = `${value.database}/${value.table}/${value.key}`;
    if (this.damaged.has(id)) return;
    this.damaged.set(id, value);
    this.damagedList = [...this.damaged.values()];
    this.emit();
  }

  /**
   * A damaged value was replaced (a good copy was written, from a pull) or deleted: it is no
   * longer reported. Keys as in DamagedValue.
   */
  forgetDamaged(database: string, table: string, keys: readonly string[]): void {
    if (this.damaged.size === 0) return;
    let changed = false;
    for (const key of keys) changed = this.damaged.delete(`${database}/${table}/${key}`) || changed;
    if (!changed) return;
    this.damagedList = [...this.damaged.values()];
    this.emit();
  }

  /** Values that failed authentication since this page loaded and were not replaced since. */
  damagedValues(): readonly DamagedValue[] {
    return this.damagedList;
  }

  subscribe(listener: () => void): () => void {
    this.listeners.add(listener);
    return () => this.listeners.delete(listener);
  }

  private emit(): void {
    for (const listener of this.listeners) listener();
  }
}

/** The vault of this tablet: one data key for the records and attachments databases. */
export const tabletVault = new DataKeyVault();
