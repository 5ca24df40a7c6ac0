import { IonContent, IonHeader, IonPage, IonTitle, IonToolbar } from '@ionic/react';
import type { ReactNode } from 'react';
import './identity.css';

/** The frame of an identity screen: a toolbar title and one centred column. */
export function IdentityPage({
  title,
  wide = false,
  children,
}: {
  title: string;
  wide?: boolean;
  children: ReactNode;
}) {
  return (
    <IonPage>
      <IonHeader>
        <IonToolbar>
          <IonTitle>{title}</IonTitle>
        </IonToolbar>
      </IonHeader>
      <IonContent>
        <main className={`fl-id-page${wide ? ' fl-id-wide' : ''}`}>
          <h1>{title}</h1>
          {children}
        </main>
      </IonContent>
    </IonPage>
  );
}
