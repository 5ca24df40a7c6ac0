import './ionic-setup';
import {
  IonApp,
  IonIcon,
  IonLabel,
  IonRouterOutlet,
  IonSpinner,
  IonTabBar,
  IonTabButton,
  IonTabs,
} from '@ionic/react';
import { IonReactRouter } from '@ionic/react-router';
import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import {
  calendarOutline,
  cloudUploadOutline,
  shieldCheckmarkOutline,
  tabletPortraitOutline,
} from 'ionicons/icons';
import { Suspense, type ReactNode } from 'react';
import { Navigate, Route } from 'react-router-dom';
import { UpdatePrompt } from '../components/UpdatePrompt';
import { FleetScreen, OutboxScreen, ReviewDeskScreen, TodayScreen } from './routes';

const queryClient = new QueryClient({
  defaultOptions: { queries: { networkMode: 'always', staleTime: 5_000, retry: 1 } },
});

function Loading() {
  return (
    <div
      role="status"
      aria-live="polite"
      style={{ display: 'grid', placeItems: 'center', height: '100%' }}
    >
      <IonSpinner name="crescent" />
      <span className="fl-muted">Loading…</span>
    </div>
  );
}

const screen = (node: ReactNode) => <Suspense fallback={<Loading />}>{node}</Suspense>;

export function App() {
  return (
    <QueryClientProvider client={queryClient}>
      <IonApp>
        <IonReactRouter>
          <IonTabs>
            <IonRouterOutlet>
              <Route path="/today" element={screen(<TodayScreen />)} />
              <Route path="/outbox" element={screen(<OutboxScreen />)} />
              <Route path="/review" element={screen(<ReviewDeskScreen />)} />
              <Route path="/fleet" element={screen(<FleetScreen />)} />
              <Route path="/" element={<Navigate to="/today" replace />} />
            </IonRouterOutlet>
            <IonTabBar slot="bottom" aria-label="Fuselight sections">
              <IonTabButton tab="today" href="/today">
                <IonIcon icon={calendarOutline} aria-hidden="true" />
                <IonLabel>Today</IonLabel>
              </IonTabButton>
              <IonTabButton tab="outbox" href="/outbox">
                <IonIcon icon={cloudUploadOutline} aria-hidden="true" />
                <IonLabel>Outbox</IonLabel>
              </IonTabButton>
              <IonTabButton tab="review" href="/review">
                <IonIcon icon={shieldCheckmarkOutline} aria-hidden="true" />
                <IonLabel>Review desk</IonLabel>
              </IonTabButton>
              <IonTabButton tab="fleet" href="/fleet">
                <IonIcon icon={tabletPortraitOutline} aria-hidden="true" />
                <IonLabel>Fleet</IonLabel>
              </IonTabButton>
            </IonTabBar>
          </IonTabs>
        </IonReactRouter>
        <UpdatePrompt />
      </IonApp>
    </QueryClientProvider>
  );
}
