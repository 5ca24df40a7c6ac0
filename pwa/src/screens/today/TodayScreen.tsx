// Today: the visits booked or seen today at this tablet's site, a quick search over every
// patient on the tablet, registering a new patient, and starting or resuming a visit. Reads
// only IndexedDB, so it works with the network off.
import { IonContent, IonHeader, IonPage, IonTitle, IonToolbar } from '@ionic/react';
import { memo, useCallback, useId, useMemo, useState, type MouseEvent } from 'react';
import { Link, useNavigate } from 'react-router-dom';
import { useSession } from '../../auth/session-context';
import { NewPatientForm } from '../../components/charting/NewPatientForm';
import {
  EmptyState,
  ErrorState,
  LoadingState,
  VisitStatusBadge,
} from '../../components/charting/ScreenState';
import { formatDate, patientFullName } from '../../components/charting/format';
import '../../components/charting/charting.css';
import { useEditContext, type LocalRecord } from '../../data';
import {
  localDate,
  useCharting,
  usePatientLookup,
  usePatientLookupPrefetch,
  usePatientLookupWarmup,
  useTodaysVisits,
  type TodayEntry,
} from '../../data/charting';

function TodayList({ siteId, today }: { siteId: string; today: string }) {
  const visits = useTodaysVisits(siteId, today);
  if (visits.isPending) return <LoadingState>Loading today’s visits…</LoadingState>;
  if (visits.isError) {
    return (
      <ErrorState title="Today’s visits could not be read from this tablet." error={visits.error} />
    );
  }
  if (visits.data.length === 0) {
    return (
      <EmptyState>
        <p>No visits booked or seen today at this site yet.</p>
        <p className="fl-muted">Find a patient or add a new one, then start a visit.</p>
      </EmptyState>
    );
  }
  return (
    <ul className="flc-list" aria-label="Today’s visits">
      {visits.data.map((entry) => (
        <TodayRow key={entry.visit.id} entry={entry} />
      ))}
    </ul>
  );
}

function TodayRow({ entry }: { entry: TodayEntry }) {
  const name = patientFullName(entry.patient);
  const draft = entry.visit.fields.status === 'draft';
  return (
    <li className="flc-row">
      <div className="flc-row__main">
        {/* The visit's state reads with the name, not among the buttons, where the row's
            48 px controls would stretch it. */}
        <span className="flc-row__heading">
          <span className="flc-row__title">{name}</span>
          <VisitStatusBadge status={entry.visit.fields.status} />
        </span>
        <span className="fl-muted">
          {entry.visit.fields.reason ?? 'No reason recorded'}
          {entry.patient ? ` · ${entry.patient.fields.clinicNumber}` : ''}
        </span>
      </div>
      <div className="flc-actions">
        <Link
          className={`flc-button${draft ? ' flc-button--primary' : ''}`}
          to={`/visit/${entry.visit.id}`}
          aria-label={`${draft ? 'Resume visit' : 'Open visit'}: ${name}`}
        >
          {draft ? 'Resume visit' : 'Open visit'}
        </Link>
        {entry.patient ? (
          <Link
            className="flc-button"
            to={`/chart/${entry.patient.id}`}
            aria-label={`Chart: ${name}`}
          >
            Chart
          </Link>
        ) : null}
      </div>
    </li>
  );
}

// Rows are memoised: a keystroke re-renders the search box, not 30 rows of the last results.
// Their links are plain anchors that the list routes in one click handler (followRowLink): a
// router Link per row runs several router hooks each, and mounting 30 rows after every query
// is the larger part of the search's time on screen.
const SearchResult = memo(function SearchResult({
  patient,
  draftVisitId,
  onStart,
  starting,
}: {
  patient: LocalRecord<'patient'>;
  draftVisitId: string | undefined;
  onStart: (patient: LocalRecord<'patient'>) => void;
  starting: boolean;
}) {
  const name = patientFullName(patient);
  return (
    <li className="flc-row">
      <div className="flc-row__main">
        <span className="flc-row__title">{name}</span>
        <span className="fl-muted">
          Born {formatDate(patient.fields.dateOfBirth)} · {patient.fields.clinicNumber}
        </span>
      </div>
      <div className="flc-actions">
        <a className="flc-button" href={`/chart/${patient.id}`} aria-label={`Chart: ${name}`}>
          Chart
        </a>
        {draftVisitId ? (
          <a
            className="flc-button flc-button--primary"
            href={`/visit/${draftVisitId}`}
            aria-label={`Resume visit: ${name}`}
          >
            Resume visit
          </a>
        ) : (
          <button
            type="button"
            className="flc-button flc-button--primary"
            disabled={starting}
            onClick={() => onStart(patient)}
            aria-label={`Start visit: ${name}`}
          >
            Start visit
          </button>
        )}
      </div>
    </li>
  );
});

/**
 * A plain left click (or Enter) on a row's link opens its screen inside the app, as a router
 * Link would; a click with a modifier key is left to the browser (a new tab or window).
 */
function useRowLinkNavigation(): (event: MouseEvent<HTMLElement>) => void {
  const navigate = useNavigate();
  return useCallback(
    (event: MouseEvent<HTMLElement>) => {
      const link = event.target instanceof Element ? event.target.closest('a[href]') : null;
      if (
        !link ||
        event.defaultPrevented ||
        event.button !== 0 ||
        event.metaKey ||
        event.ctrlKey ||
        event.shiftKey ||
        event.altKey
      ) {
        return;
      }
      event.preventDefault();
      navigate(link.getAttribute('href') ?? '/');
    },
    [navigate],
  );
}

function PatientSearch({ siteId, today }: { siteId: string | null; today: string }) {
  const inputId = useId();
  const [query, setQuery] = useState('');
  // No deferred value: the lookup is answered from memory, and its 30 rows render within a frame.
  const results = usePatientLookup(query);
  const startLookup = usePatientLookupPrefetch();
  const followRowLink = useRowLinkNavigation();
  const todays = useTodaysVisits(siteId, today);
  // The search's patient directory loads once today's list is read, not before: cold start
  // comes first.
  usePatientLookupWarmup(todays.fetchStatus === 'idle');
  const charting = useCharting();
  const editContext = useEditContext();
  const { user } = useSession();
  const navigate = useNavigate();
  const [startError, setStartError] = useState<string | null>(null);
  const [starting, setStarting] = useState(false);

  const drafts = useMemo(
    () =>
      new Map(
        (todays.data ?? [])
          .filter((e) => e.visit.fields.status === 'draft')
          .map((e) => [e.visit.fields.patientId, e.visit.id] as const),
      ),
    [todays.data],
  );

  // Stable while the person, site and day are, so the memoised rows are not re-rendered.
  const onStart = useCallback(
    (patient: LocalRecord<'patient'>) => {
      const start = async () => {
        setStartError(null);
        if (!user || !siteId) {
          setStartError('Sign in and choose a site before starting a visit.');
          return;
        }
        setStarting(true);
        try {
          const visitId = await charting.startVisit(
            { patientId: patient.id, siteId, clinicianId: user.id, date: today },
            editContext(),
          );
          navigate(`/visit/${visitId}`);
        } catch (error) {
          setStartError(error instanceof Error ? error.message : String(error));
        } finally {
          setStarting(false);
        }
      };
      void start();
    },
    [charting, editContext, navigate, siteId, today, user],
  );

  const trimmed = query.trim();
  // While a query runs (a few milliseconds), the previous query's rows and count stay as they
  // were, marked busy, rather than flashing "Searching…" at every keystroke; the status line
  // speaks once this query's results are in.
  const searching = results.isPending || results.isPlaceholderData;
  const [shownStatus, setShownStatus] = useState('');
  let status = 'Type a name, clinic number or date of birth (YYYY-MM-DD).';
  if (trimmed !== '') {
    if (results.isError) status = 'Search failed on this tablet.';
    else if (results.isPlaceholderData) status = shownStatus;
    else if (results.isPending) status = 'Searching…';
    else
      status = `${results.data.length} ${results.data.length === 1 ? 'patient' : 'patients'} found`;
  }
  if (!results.isPlaceholderData && status !== shownStatus) setShownStatus(status);

  return (
    <section className="flc-panel" aria-labelledby="find-patient-title">
      <h2 id="find-patient-title">Find a patient</h2>
      <div className="flc-field">
        <label htmlFor={inputId}>Name, clinic number or date of birth</label>
        <input
          id={inputId}
          type="search"
          className="flc-input"
          autoComplete="off"
          spellCheck={false}
          value={query}
          onChange={(event) => {
            startLookup(event.target.value);
            setQuery(event.target.value);
          }}
        />
      </div>
      <p className="flc-status" role="status" aria-live="polite">
        {status}
      </p>
      <p className="flc-message flc-message--error" role="alert">
        {startError ?? ''}
      </p>
      <div className="flc-results">
        {results.isError ? (
          <ErrorState title="The patient search could not run." error={results.error} />
        ) : trimmed !== '' && results.data && results.data.length > 0 ? (
          <ul
            className="flc-list"
            aria-label="Search results"
            aria-busy={searching}
            onClick={followRowLink}
          >
            {results.data.map((patient) => (
              <SearchResult
                key={patient.id}
                patient={patient}
                draftVisitId={drafts.get(patient.id)}
                onStart={onStart}
                starting={starting}
              />
            ))}
          </ul>
        ) : trimmed !== '' && !searching && results.data?.length === 0 ? (
          <EmptyState>No patient on this tablet matches “{trimmed}”.</EmptyState>
        ) : null}
      </div>
    </section>
  );
}

export default function TodayScreen() {
  const { activeSiteId, user } = useSession();
  const today = localDate();
  const [adding, setAdding] = useState(false);
  const navigate = useNavigate();
  return (
    <IonPage>
      <IonHeader>
        <IonToolbar>
          <IonTitle>Today</IonTitle>
        </IonToolbar>
      </IonHeader>
      <IonContent>
        <main className="flc-page">
          <h1 className="flc-visually-hidden">Today</h1>
          {!user ? (
            <EmptyState>Sign in to see today’s visits and chart patients.</EmptyState>
          ) : null}
          <div className="flc-columns">
            {adding && activeSiteId ? (
              // The form takes the search panel's place, so each label on screen is unique.
              <NewPatientForm
                siteId={activeSiteId}
                today={today}
                onCancel={() => setAdding(false)}
                onCreated={(id) => {
                  setAdding(false);
                  navigate(`/chart/${id}`);
                }}
              />
            ) : (
              <PatientSearch siteId={activeSiteId} today={today} />
            )}
            <section className="flc-panel" aria-labelledby="today-list-title">
              <header>
                <h2 id="today-list-title">Booked and seen today · {formatDate(today)}</h2>
                <button
                  type="button"
                  className="flc-button"
                  onClick={() => setAdding(true)}
                  disabled={adding || !activeSiteId}
                >
                  New patient
                </button>
              </header>
              {activeSiteId ? (
                <TodayList siteId={activeSiteId} today={today} />
              ) : (
                <EmptyState>
                  This tablet has no active site; choose one when you sign in.
                </EmptyState>
              )}
            </section>
          </div>
        </main>
      </IonContent>
    </IonPage>
  );
}
