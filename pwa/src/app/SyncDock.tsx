// Always visible on clinical screens: Ionic's tab bar shows only tab buttons, so the sync
// indicator sits in a strip just above it, in the tabs' bottom slot. The screens' content ends
// above the strip, so it never floats over the last fields of a form.
import { SyncIndicator } from '../components/SyncIndicator';

export function SyncDock() {
  return (
    <div slot="bottom" className="fl-sync-dock">
      <SyncIndicator compact />
    </div>
  );
}
