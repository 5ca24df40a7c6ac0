// The enrolled tablet's standing with the clinic: enrolment, the server's word on it (its
// unlock policy; retired: send what is left, then erase), the heartbeat, and erasure when the
// clinic revokes or retires it (every database erased, a note kept to say why). At enrolment it
// asks the browser for persistent storage (pwa/src/storage/storage-health.ts).
import type { KeyProtectionKind } from '@fuselight/shared/admin-views';
import type { KeyRing } from '../../data/crypto/key-ring';
import { askForPersistentStorage } from '../../storage/storage-health';
import type { TabletCredentials } from '../auth-db';
import { ApiError, NetworkError } from '../../net/api-client';
import type { IdentityApi } from '../identity-api';
import {
  clearErasureNote,
  writeErasureNote,
  type ErasureCause,
  type ErasureNote,
} from '../tablet-erasure';
import { keyProtectionOf } from './key-protection';
import type { PinLock } from './pin-lock';
import type { SessionState } from './session-state';
import type { SessionTokens } from './tokens';

/**
 * Removes what the tablet holds of sites outside `holdSiteIds` (data/site-scope.ts); `siteName`
 * names a site for the words on screen.
 */
export type SiteScopeApplier = (
  holdSiteIds: readonly string[],
  siteName: (siteId: string) => string | null,
) => Promise<void>;

/** Settings key noting that the browser was asked for persistent storage, and its answer. */
export const PERSISTENCE_ASKED_KEY = 'storagePersistenceAsked';

export class TabletLifecycle {
  private erasing: Promise<void> | null = null;

  constructor(
    private readonly state: SessionState,
    private readonly api: IdentityApi,
    private readonly pinLock: PinLock,
    private readonly tokens: () => SessionTokens,
    private readonly eraseDatabases: () => Promise<unknown>,
    private readonly keyRing: Pick<KeyRing, 'destroySlots'> & Partial<Pick<KeyRing, 'slotSummary'>>,
    private readonly applySiteScope: SiteScopeApplier | null = null,
  ) {}

  /**
   * The server named the sites this tablet may hold now (older servers do not): what it holds
   * of any other site goes, unsent edits stay (data/site-scope.ts). A failure here is retried at
   * the next contact and never stops the heartbeat.
   */
  private async keepToSites(answer: unknown): Promise<void> {
    if (!this.applySiteScope || typeof answer !== 'object' || answer === null) return;
    const hold = (answer as { holdSiteIds?: unknown }).holdSiteIds;
    if (!Array.isArray(hold) || !hold.every((id) => typeof id === 'string')) return;
    try {
      await this.applySiteScope(hold, (id) => this.state.sites.get(id)?.name ?? null);
    } catch {
      // Retried at the next contact.
    }
  }

  async enrol(code: string): Promise<void> {
    const answer = await this.api.enrol(code.trim().toUpperCase());
    const tablet: TabletCredentials = {
      key: 'tablet',
      deviceId: answer.deviceId,
      deviceSecret: answer.deviceSecret,
      enrolledAt: this.state.now(),
      state: 'active',
    };
    await this.state.db.tablet.put(tablet);
    this.state.tablet = tablet;
    this.state.erasure = null;
    clearErasureNote();
    this.state.publish();
    await this.askForPersistentStorage();
  }

  /**
   * Asks the browser to keep this site's storage, and notes that it asked (with the answer) in
   * the settings table. Done at enrolment; a tablet enrolled before this was asked once later.
   */
  async askForPersistentStorage(): Promise<void> {
    const granted = await askForPersistentStorage();
    if (granted === null) return;
    await this.state.db.settings
      .put({ key: PERSISTENCE_ASKED_KEY, value: { granted, at: this.state.now() } })
      .catch(() => undefined);
  }

  /** An enrolled tablet that was never asked for persistent storage is asked now. */
  async askForPersistentStorageOnce(): Promise<void> {
    if (!this.state.tablet) return;
    const asked = await this.state.db.settings.get(PERSISTENCE_ASKED_KEY).catch(() => undefined);
    if (!asked) await this.askForPersistentStorage();
  }

  /** Asks the server about this tablet; a retired tablet starts emptying its Outbox. */
  async checkTablet(): Promise<void> {
    if (!this.state.tablet) return;
    const token = await this.tokens().anyToken();
    if (!token) return;
    try {
      const status = await this.api.deviceStatus(token);
      await this.keepToSites(status);
      if (
        status.offlineUnlockHours !== undefined ||
        status.maxPinAttempts !== undefined ||
        status.unsyncedWarningHours !== undefined ||
        status.unlockWithoutHardware !== undefined
      ) {
        await this.pinLock.setPolicy({
          offlineUnlockHours: status.offlineUnlockHours,
          maxPinAttempts: status.maxPinAttempts,
          unsyncedWarningHours: status.unsyncedWarningHours,
          unlockWithoutHardware: status.unlockWithoutHardware,
        });
        this.state.publish();
      }
      if (status.state === 'retired' && this.state.tablet.state !== 'retired') {
        const tablet = { ...this.state.tablet, state: 'retired' as const };
        await this.state.db.tablet.put(tablet);
        this.state.tablet = tablet;
        this.state.publish();
      }
    } catch (error) {
      await this.eraseIfTold(error);
      return;
    }
    if (this.state.tablet?.state === 'retired') await this.continueRetirement();
  }

  /** A retired tablet erases itself once nothing is left to send. */
  async continueRetirement(): Promise<void> {
    if (this.state.tablet?.state !== 'retired') return;
    const waitingChanges = await this.state.countOutbox();
    if (waitingChanges === 0) {
      await this.erase(
        'retired',
        'This tablet was retired by the clinic. Every change had been sent, and its data was then erased.',
      );
      return;
    }
    this.state.retirement = { waitingChanges };
    this.state.publish();
  }

  async heartbeat(appVersion: string): Promise<void> {
    if (!this.state.tablet) return;
    const token = await this.tokens().anyToken();
    if (!token) return;
    try {
      const keyProtection = await this.keyProtection();
      const answer = await this.api.heartbeat(token, {
        appVersion,
        outboxSize: await this.state.countOutbox(),
        ...(keyProtection ? { keyProtection } : {}),
      });
      await this.keepToSites(answer);
    } catch (error) {
      if (await this.eraseIfTold(error)) return;
      if (!(error instanceof NetworkError)) throw error;
    }
  }

  /** How the data key is protected now (key-protection.ts); null when it cannot be read. */
  async keyProtection(): Promise<KeyProtectionKind | null> {
    if (!this.keyRing.slotSummary) return null;
    try {
      const slots = await this.keyRing.slotSummary();
      return keyProtectionOf(slots, (userId) => this.pinLock.secretKind(userId));
    } catch {
      return null;
    }
  }

  /** True (after erasing) when `error` is the server telling a revoked tablet to erase. */
  async eraseIfTold(error: unknown): Promise<boolean> {
    if (!(error instanceof ApiError) || !error.erase) return false;
    await this.erase(
      'revoked',
      `${error.message} This tablet was revoked by the clinic, so every record on it has been erased.`,
    );
    return true;
  }

  erase(cause: ErasureCause, message: string): Promise<void> {
    this.erasing ??= this.doErase(cause, message).finally(() => {
      this.erasing = null;
    });
    return this.erasing;
  }

  private async doErase(cause: ErasureCause, message: string): Promise<void> {
    const state = this.state;
    const note: ErasureNote = { cause, message, at: state.now() };
    // Crypto-erase first: with every key slot gone the sealed data is unreadable at once, even
    // if deleting the databases is cut short.
    try {
      await this.keyRing.destroySlots();
    } catch {
      // The records database may be gone already; deleting the databases below covers it.
    }
    state.db.close();
    await this.eraseDatabases();
    writeErasureNote(note);
    state.db = state.openDb();
    state.tablet = null;
    state.people.clear();
    this.pinLock.clear();
    state.sites.clear();
    state.colleagues.clear();
    state.waiting.clear();
    state.activeUserId = null;
    state.retirement = null;
    state.erasure = note;
    state.publish();
  }

  /** After reading why the tablet was erased, the person may enrol it again. */
  dismissErasure(): void {
    clearErasureNote();
    this.state.erasure = null;
    this.state.publish();
  }
}
