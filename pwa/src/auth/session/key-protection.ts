// How this tablet's data key is protected, for its heartbeat and the Fleet screen
// (docs/threat-model.md): any one slot opens the key, so the weakest slot decides. A PIN of
// digits can be tried offline against a copied profile; only when every person's slot needs a
// passphrase does the tablet report `passphrase`; only when every person's slot also needs the
// tablet's platform authenticator (its hardware share) does it report `hardware`.
import type { KeyProtectionKind } from '@fuselight/shared/admin-views';

export function keyProtectionOf(
  slots: { pinUserIds: readonly string[]; hardwareUserIds?: readonly string[]; server: boolean },
  secretKind: (userId: string) => 'pin' | 'passphrase' | null,
): KeyProtectionKind {
  if (slots.pinUserIds.length === 0) return slots.server ? 'server-only' : 'unprotected';
  const hardware = new Set(slots.hardwareUserIds ?? []);
  if (slots.pinUserIds.every((userId) => hardware.has(userId))) return 'hardware';
  // The slots without the hardware share are the weakest: they decide.
  const plain = slots.pinUserIds.filter((userId) => !hardware.has(userId));
  // A slot made before the kind was noted counts as a PIN: the weaker of the two.
  const anyPin = plain.some((userId) => secretKind(userId) !== 'passphrase');
  return anyPin ? 'pin-only' : 'passphrase';
}
