// The app's root. Until someone is signed in (or unlocked with a PIN) it draws the signed-out
// shell: sign-in, the PIN switcher and enrolment, in plain React without Ionic, so a tablet's
// first screen loads little. Once someone is signed in, the Ionic app (SignedInApp: tab bar,
// screens, sync engine) loads in its own chunk; locking the tablet returns to the shell, which
// sends the person to the PIN switcher and back to the screen that was open.
import '../theme/fonts';
import '../theme/variables.css';
import '../theme/base.css';
import { QueryClient, QueryClientProvider, notifyManager } from '@tanstack/react-query';
import { lazy, Suspense, useEffect, type ReactNode } from 'react';
import { BrowserRouter, Route, Routes } from 'react-router-dom';
import { IdentityGate, SignedOutLanding } from '../auth/IdentityGate';
import { SessionProvider, useAuthState } from '../auth/SessionProvider';
import { SignInPrompt } from '../auth/SignInPrompt';
import { Loading } from './Loading';
import { useAfterFirstScreen } from './useAfterFirstScreen';
import {
  EnrolScreen,
  DamagedValuesNote,
  preloadShellScreen,
  SignInScreen,
  StorageWarningBanner,
  TabletErasedScreen,
  UnlockScreen,
  UpdatePrompt,
} from './routes';

// Query results reach React in the same task as the IndexedDB reply that produced them. The
// default, a zero timeout, queues them behind whatever the browser has due, which can put a
// frame's style, layout and paint between a search's read and its rows. React still batches
// the updates of one task into one render.
notifyManager.setScheduler(queueMicrotask);

const queryClient = new QueryClient({
  defaultOptions: { queries: { networkMode: 'always', staleTime: 5_000, retry: 1 } },
});

const loadSignedInApp = () => import('./SignedInApp');
// The signed-in app is drawn once its code and what the storage warning above it needs are both
// there, so the warning never appears after it and pushes it down.
const SignedInApp = lazy(async () => {
  const app = await loadSignedInApp();
  await app.prefetchStorageWarnings(queryClient);
  return app;
});

// Whether someone was signed in when this tablet last ran the app (a flag, nothing about who):
// if so, the signed-in app's code is fetched at once, beside the session's own load, rather
// than after it. A wrong guess only fetches code the service worker has cached anyway.
const SIGNED_IN_HINT = 'fuselight:signed-in';
try {
  if (globalThis.localStorage?.getItem(SIGNED_IN_HINT) === '1') void loadSignedInApp();
} catch {
  // Storage blocked: no head start.
}
if (typeof location !== 'undefined') preloadShellScreen(location.pathname);

const screen = (node: ReactNode) => <Suspense fallback={<Loading />}>{node}</Suspense>;

/** Sign-in, PIN unlock and enrolment: all a tablet shows before someone is signed in. */
function SignedOutShell() {
  return (
    <BrowserRouter>
      {/* Here the warning waits until the first screen is up (on a new tablet it has nothing to
          say); the signed-in app draws its own with itself. */}
      <AfterFirstScreen>
        <Suspense fallback={null}>
          <StorageWarningBanner />
        </Suspense>
      </AfterFirstScreen>
      <SignInPrompt />
      <div className="fl-shell-app">
        <Routes>
          <Route path="/signin" element={screen(<SignInScreen />)} />
          <Route path="/unlock" element={screen(<UnlockScreen />)} />
          <Route path="/enrol" element={screen(<EnrolScreen />)} />
          <Route path="*" element={<SignedOutLanding />} />
        </Routes>
      </div>
    </BrowserRouter>
  );
}

function ShellForPerson() {
  const signedIn = useAuthState().activeUser !== null;
  useEffect(() => {
    try {
      if (signedIn) localStorage.setItem(SIGNED_IN_HINT, '1');
      else localStorage.removeItem(SIGNED_IN_HINT);
    } catch {
      // Storage blocked: the next start has no head start, nothing else changes.
    }
  }, [signedIn]);
  if (!signedIn) return <SignedOutShell />;
  return (
    <Suspense fallback={<Loading />}>
      <StorageWarningBanner />
      <div className="fl-shell-app">
        <SignedInApp />
      </div>
    </Suspense>
  );
}

/** What the app draws beside its screens, once the first screen is up (useAfterFirstScreen). */
function AfterFirstScreen({ children }: { children: ReactNode }) {
  return useAfterFirstScreen() ? children : null;
}

export function App() {
  return (
    <QueryClientProvider client={queryClient}>
      <SessionProvider>
        {/* The storage warning sits above the app in the flow, on every screen (drawn by each shell). */}
        <div className="fl-shell">
          <AfterFirstScreen>
            <Suspense fallback={null}>
              <DamagedValuesNote />
            </Suspense>
          </AfterFirstScreen>
          <IdentityGate
            loading={<Loading />}
            erased={(note) => (
              <BrowserRouter>
                <div className="fl-shell-app">{screen(<TabletErasedScreen note={note} />)}</div>
              </BrowserRouter>
            )}
          >
            <ShellForPerson />
          </IdentityGate>
          <AfterFirstScreen>
            <Suspense fallback={null}>
              <UpdatePrompt />
            </Suspense>
          </AfterFirstScreen>
        </div>
      </SessionProvider>
    </QueryClientProvider>
  );
}
