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
import { QueryClient, QueryClientProvider, notifyManager } from '@tanstack/react-query';
import {
  businessOutline,
  calendarOutline,
  cloudUploadOutline,
  peopleOutline,
  personCircleOutline,
  shieldCheckmarkOutline,
  tabletPortraitOutline,
} from 'ionicons/icons';
import type { Role } from '@fuselight/shared';
import { Suspense, type ReactNode } from 'react';
import { Route, useLocation } from 'react-router-dom';
import { DamagedValuesNote } from '../components/DamagedValuesNote';
import { canSee } from '../auth/access';
import { HomeRedirect, IdentityGate, RequireArea } from '../auth/IdentityGate';
import { useSession } from '../auth/session-context';
import { SessionProvider } from '../auth/SessionProvider';
import { SignInPrompt } from '../auth/SignInPrompt';
import {
  BenchScreen,
  ChartScreen,
  EnrolScreen,
  FleetScreen,
  OutboxScreen,
  PeopleScreen,
  PersonScreen,
  PinSetupScreen,
  ReviewDeskScreen,
  ReviewTabBadge,
  SignInScreen,
  SitesScreen,
  StorageWarningBanner,
  SyncDock,
  SyncRuntime,
  TabletErasedScreen,
  TodayScreen,
  UnlockScreen,
  UpdatePrompt,
  VisitScreen,
} from './routes';

// Query results reach React in the same task as the IndexedDB reply that produced them. The
// default, a zero timeout, queues them behind whatever the browser has due, which can put a
// frame's style, layout and paint between a search's read and its rows. React still batches
// the updates of one task into one render.
notifyManager.setScheduler(queueMicrotask);

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
const clinical = (node: ReactNode) => <RequireArea area="clinical">{screen(node)}</RequireArea>;
const admin = (node: ReactNode) => <RequireArea area="admin">{screen(node)}</RequireArea>;

function AppTabs() {
  const role = useSession().user?.role;
  // The Bench is full screen and carries its own sync indicator.
  const onBench = useLocation().pathname.startsWith('/bench/');
  return <AppTabsInner role={role} dock={canSee(role, 'clinical') && !onBench} />;
}

function AppTabsInner({ role, dock }: { role: Role | undefined; dock: boolean }) {
  return (
    <IonTabs>
      <IonRouterOutlet>
        {/* Sign-in, PIN unlock and enrolment: all a tablet shows before someone is signed in. */}
        <Route path="/signin" element={screen(<SignInScreen />)} />
        <Route path="/unlock" element={screen(<UnlockScreen />)} />
        <Route path="/enrol" element={screen(<EnrolScreen />)} />
        <Route path="/today" element={clinical(<TodayScreen />)} />
        <Route path="/chart/:patientId" element={clinical(<ChartScreen />)} />
        <Route path="/visit/:visitId" element={clinical(<VisitScreen />)} />
        <Route path="/outbox" element={clinical(<OutboxScreen />)} />
        <Route path="/bench/:visitId" element={clinical(<BenchScreen />)} />
        <Route
          path="/review"
          element={<RequireArea area="review">{screen(<ReviewDeskScreen />)}</RequireArea>}
        />
        <Route path="/fleet" element={admin(<FleetScreen />)} />
        <Route path="/people" element={admin(<PeopleScreen />)} />
        <Route path="/sites" element={admin(<SitesScreen />)} />
        <Route
          path="/person"
          element={<RequireArea area="self">{screen(<PersonScreen />)}</RequireArea>}
        />
        <Route
          path="/pin"
          element={<RequireArea area="self">{screen(<PinSetupScreen />)}</RequireArea>}
        />
        <Route path="/" element={<HomeRedirect />} />
        <Route path="*" element={<HomeRedirect />} />
      </IonRouterOutlet>
      {dock ? (
        <Suspense fallback={<div slot="bottom" className="fl-sync-dock" />}>
          <SyncDock />
        </Suspense>
      ) : null}
      <IonTabBar
        slot="bottom"
        aria-label="Fuselight sections"
        style={role ? undefined : { display: 'none' }}
      >
        {canSee(role, 'clinical') ? (
          <IonTabButton tab="today" href="/today">
            <IonIcon icon={calendarOutline} aria-hidden="true" />
            <IonLabel>Today</IonLabel>
          </IonTabButton>
        ) : null}
        {canSee(role, 'clinical') ? (
          <IonTabButton tab="outbox" href="/outbox">
            <IonIcon icon={cloudUploadOutline} aria-hidden="true" />
            <IonLabel>Outbox</IonLabel>
          </IonTabButton>
        ) : null}
        {canSee(role, 'review') ? (
          <IonTabButton tab="review" href="/review">
            <IonIcon icon={shieldCheckmarkOutline} aria-hidden="true" />
            <IonLabel>Review desk</IonLabel>
            <Suspense fallback={null}>
              <ReviewTabBadge />
            </Suspense>
          </IonTabButton>
        ) : null}
        {canSee(role, 'admin') ? (
          <IonTabButton tab="fleet" href="/fleet">
            <IonIcon icon={tabletPortraitOutline} aria-hidden="true" />
            <IonLabel>Fleet</IonLabel>
          </IonTabButton>
        ) : null}
        {canSee(role, 'admin') ? (
          <IonTabButton tab="people" href="/people">
            <IonIcon icon={peopleOutline} aria-hidden="true" />
            <IonLabel>People</IonLabel>
          </IonTabButton>
        ) : null}
        {canSee(role, 'admin') ? (
          <IonTabButton tab="sites" href="/sites">
            <IonIcon icon={businessOutline} aria-hidden="true" />
            <IonLabel>Sites</IonLabel>
          </IonTabButton>
        ) : null}
        <IonTabButton tab="person" href="/person">
          <IonIcon icon={personCircleOutline} aria-hidden="true" />
          <IonLabel>You</IonLabel>
        </IonTabButton>
      </IonTabBar>
    </IonTabs>
  );
}

/** The sync engine runs once the tablet is enrolled and someone is signed in. */
function SignedInSync() {
  const { user, deviceId } = useSession();
  if (!user || !deviceId) return null;
  return (
    <Suspense fallback={null}>
      <SyncRuntime />
    </Suspense>
  );
}

export function App() {
  return (
    <QueryClientProvider client={queryClient}>
      <SessionProvider>
        {/* The storage warning sits above the Ionic app in the flow, on every screen. */}
        <div className="fl-shell">
          <Suspense fallback={null}>
            <StorageWarningBanner />
          </Suspense>
          <DamagedValuesNote />
          <div className="fl-shell-app">
            <IonApp>
              <IonReactRouter>
                <IdentityGate
                  loading={<Loading />}
                  erased={(note) => screen(<TabletErasedScreen note={note} />)}
                >
                  <AppTabs />
                </IdentityGate>
                <SignInPrompt />
                <SignedInSync />
              </IonReactRouter>
              <Suspense fallback={null}>
                <UpdatePrompt />
              </Suspense>
            </IonApp>
          </div>
        </div>
      </SessionProvider>
    </QueryClientProvider>
  );
}
