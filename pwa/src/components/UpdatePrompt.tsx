import { IonToast } from '@ionic/react';
import { useRegisterSW } from 'virtual:pwa-register/react';

/** Registers the service worker and offers to reload when a new version has been deployed. */
export function UpdatePrompt() {
  const {
    needRefresh: [needRefresh, setNeedRefresh],
    updateServiceWorker,
  } = useRegisterSW({ immediate: true });

  if (!needRefresh) return null;
  return (
    <IonToast
      isOpen
      message="A new version of Fuselight is ready. Your saved work stays on this tablet."
      position="bottom"
      buttons={[
        { text: 'Later', role: 'cancel', handler: () => setNeedRefresh(false) },
        { text: 'Update now', handler: () => void updateServiceWorker(true) },
      ]}
    />
  );
}
