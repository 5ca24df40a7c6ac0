import { IonContent, IonHeader, IonPage, IonTitle, IonToolbar } from '@ionic/react';

/** A placeholder screen that says plainly it is not built yet. */
export function NotBuiltYet({ title, purpose }: { title: string; purpose: string }) {
  return (
    <IonPage>
      <IonHeader>
        <IonToolbar>
          <IonTitle>{title}</IonTitle>
        </IonToolbar>
      </IonHeader>
      <IonContent className="ion-padding">
        <h1>{title}</h1>
        <p>{purpose}</p>
        <p className="fl-muted">This screen is not built yet.</p>
      </IonContent>
    </IonPage>
  );
}
