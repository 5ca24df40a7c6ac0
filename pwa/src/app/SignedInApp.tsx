// The app of a signed-in person: Ionic's shell, tab bar and every screen, with the sync engine.
// It is its own chunk, loaded once someone is signed in or unlocked (app/App.tsx): sign-in,
// PIN unlock and enrolment are drawn without Ionic, so a tablet's first screen stays small.
import './ionic-setup';
import { IonApp, IonLabel, IonRouterOutlet, IonTabBar, IonTabButton, IonTabs } from '@ionic/react';
import { IonReactRouter } from '@ionic/react-router';
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
import { canSee } from '../auth/access';
import { Glyph } from '../components/Glyph';
import { HomeRedirect, RequireArea } from '../auth/IdentityGate';
import { useSession } from '../auth/session-context';
import { SignInPrompt } from '../auth/SignInPrompt';
import { IdentityFrameContext, type IdentityFrameProps } from '../auth/ui/IdentityPage';
import { IonicIdentityFrame } from './IonicIdentityFrame';
import { Loading } from './Loading';
import { useAfterFirstCommit } from './useAfterFirstScreen';
import {
  BenchScreen,
  NewerRecordsUpdateCheck,
  ChartScreen,
  FleetScreen,
  OutboxScreen,
  PeopleScreen,
  PersonScreen,
  PinSetupScreen,
  ReviewDeskScreen,
  ReviewTabBadge,
  SitesScreen,
  SyncDock,
  SyncRuntime,
  TodayScreen,
  VisitScreen,
} from './signed-in-routes';
import { EnrolScreen, SignInScreen, UnlockScreen } from './routes';

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
      <AppTabBar role={role} />
    </IonTabs>
  );
}

/**
 * The tab bar (a dozen Ionic elements) is drawn a task after the shell and the screen, in a strip
 * of its own size until then, so that neither first task is long on a slow tablet. Its own
 * component, so that drawing it re-renders nothing else; IonTabs reaches it through its context.
 */
function AppTabBar({ role }: { role: Role | undefined }) {
  const tabBarReady = useAfterFirstCommit();
  return (
    <>
      {tabBarReady ? null : (
        <div
          slot="bottom"
          className="fl-tab-bar-pending"
          style={role ? undefined : { display: 'none' }}
        />
      )}
      {tabBarReady ? (
        <IonTabBar
          slot="bottom"
          aria-label="Fuselight sections"
          style={role ? undefined : { display: 'none' }}
        >
          {canSee(role, 'clinical') ? (
            <IonTabButton tab="today" href="/today">
              <Glyph icon={calendarOutline} />
              <IonLabel>Today</IonLabel>
            </IonTabButton>
          ) : null}
          {canSee(role, 'clinical') ? (
            <IonTabButton tab="outbox" href="/outbox">
              <Glyph icon={cloudUploadOutline} />
              <IonLabel>Outbox</IonLabel>
            </IonTabButton>
          ) : null}
          {canSee(role, 'review') ? (
            <IonTabButton tab="review" href="/review">
              <Glyph icon={shieldCheckmarkOutline} />
              <IonLabel>Review desk</IonLabel>
              <Suspense fallback={null}>
                <ReviewTabBadge />
              </Suspense>
            </IonTabButton>
          ) : null}
          {canSee(role, 'admin') ? (
            <IonTabButton tab="fleet" href="/fleet">
              <Glyph icon={tabletPortraitOutline} />
              <IonLabel>Fleet</IonLabel>
            </IonTabButton>
          ) : null}
          {canSee(role, 'admin') ? (
            <IonTabButton tab="people" href="/people">
              <Glyph icon={peopleOutline} />
              <IonLabel>People</IonLabel>
            </IonTabButton>
          ) : null}
          {canSee(role, 'admin') ? (
            <IonTabButton tab="sites" href="/sites">
              <Glyph icon={businessOutline} />
              <IonLabel>Sites</IonLabel>
            </IonTabButton>
          ) : null}
          <IonTabButton tab="person" href="/person">
            <Glyph icon={personCircleOutline} />
            <IonLabel>You</IonLabel>
          </IonTabButton>
        </IonTabBar>
      ) : null}
    </>
  );
}

/** The sync engine runs once the tablet is enrolled and someone is signed in. */
function SignedInSync() {
  const { user, deviceId } = useSession();
  if (!user || !deviceId) return null;
  return (
    <Suspense fallback={null}>
      <SyncRuntime />
      <NewerRecordsUpdateCheck />
    </Suspense>
  );
}

const ionicFrame = (props: IdentityFrameProps) => <IonicIdentityFrame {...props} />;

// Read before the app is first drawn, with the storage warning above it (App.tsx).
export { prefetchStorageWarnings } from '../storage/prefetch-storage-warnings';

export default function SignedInApp() {
  return (
    <IdentityFrameContext.Provider value={ionicFrame}>
      <IonApp>
        <IonReactRouter>
          <AppTabs />
          <SignInPrompt />
          <SignedInSync />
        </IonReactRouter>
      </IonApp>
    </IdentityFrameContext.Provider>
  );
}
