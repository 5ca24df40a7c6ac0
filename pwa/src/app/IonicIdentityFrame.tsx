import { IonContent, IonHeader, IonPage, IonTitle, IonToolbar } from '@ionic/react';
import type { IdentityFrameProps } from '../auth/ui/IdentityPage';

/** An identity screen's frame inside the signed-in app: an Ionic page, as the outlet expects. */
export function IonicIdentityFrame({ title, children }: IdentityFrameProps) {
  return (
    <IonPage>
      <IonHeader>
        <IonToolbar>
          <IonTitle>{title}</IonTitle>
        </IonToolbar>
      </IonHeader>
      <IonContent>{children}</IonContent>
    </IonPage>
  );
}
