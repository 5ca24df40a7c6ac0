// Chart: a patient's details (editable), their visits newest first, and trends of the main
// findings across visits (the charts are their own lazily loaded chunk).
import {
  IonBackButton,
  IonButtons,
  IonContent,
  IonHeader,
  IonPage,
  IonTitle,
  IonToolbar,
} from '@ionic/react';
import { CLINICAL_CAUTION } from '@fuselight/shared';
import { Suspense, lazy, useMemo, useState } from 'react';
import { Link, useNavigate, useParams } from 'react-router-dom';
import { useSession } from '../../auth/session-context';
import { PatientDetailsForm } from '../../components/charting/PatientDetailsForm';
import {
  EmptyState,
  ErrorState,
  LoadingState,
  VisitStatusBadge,
} from '../../components/charting/ScreenState';
import { describeAge, formatDate, patientFullName } from '../../components/charting/format';
import { buildTrends } from '../../components/charting/trends';
import '../../components/charting/charting.css';
import { useEditContext, type LocalRecord } from '../../data';
import {
  localDate,
  useCharting,
  usePatient,
  usePatientSections,
  usePatientVisits,
} from '../../data/charting';

const TrendCharts = lazy(() => import('../../components/charting/TrendCharts'));
const TREND_SECTIONS = ['amblyoscopeAngles', 'fusionalRanges', 'visualAcuity'] as const;

function VisitList({ patient, today }: { patient: LocalRecord<'patient'>; today: string }) {
  const visits = usePatientVisits(patient.id);
  const charting = useCharting();
  const editContext = useEditContext();
  const { user, activeSiteId } = useSession();
  const navigate = useNavigate();
  const [error, setError] = useState<string | null>(null);
  const todaysDraft = visits.data?.find(
    (v) => v.fields.date === today && v.fields.status === 'draft',
  );
  const start = async () => {
    setError(null);
    if (!user || !activeSiteId) {
      setError('Sign in and choose a site before starting a visit.');
      return;
    }
    try {
      const id = await charting.startVisit(
        { patientId: patient.id, siteId: activeSiteId, clinicianId: user.id, date: today },
        editContext(),
      );
      navigate(`/visit/${id}`);
    } catch (caught) {
      setError(caught instanceof Error ? caught.message : String(caught));
    }
  };
  return (
    <section className="flc-panel" aria-labelledby="visits-title">
      <header>
        <h2 id="visits-title">Visits</h2>
        {todaysDraft ? (
          <Link className="flc-button flc-button--primary" to={`/visit/${todaysDraft.id}`}>
            Resume today’s visit
          </Link>
        ) : (
          <button
            type="button"
            className="flc-button flc-button--primary"
            onClick={() => void start()}
          >
            Start visit
          </button>
        )}
      </header>
      <p className="flc-message flc-message--error" role="alert">
        {error ?? ''}
      </p>
      {visits.isPending ? (
        <LoadingState>Loading visits…</LoadingState>
      ) : visits.isError ? (
        <ErrorState title="The visits could not be read from this tablet." error={visits.error} />
      ) : visits.data.length === 0 ? (
        <EmptyState>No visits yet for this patient.</EmptyState>
      ) : (
        <ul className="flc-list" aria-label="Visits, newest first">
          {visits.data.map((visit) => (
            <li key={visit.id} className="flc-row">
              <div className="flc-row__main">
                <span className="flc-row__title">{formatDate(visit.fields.date)}</span>
                <span className="fl-muted">{visit.fields.reason ?? 'No reason recorded'}</span>
              </div>
              <div className="flc-actions">
                <VisitStatusBadge status={visit.fields.status} />
                <Link
                  className="flc-button"
                  to={`/visit/${visit.id}`}
                  aria-label={`Open visit of ${formatDate(visit.fields.date)}`}
                >
                  Open
                </Link>
              </div>
            </li>
          ))}
        </ul>
      )}
    </section>
  );
}

function Trends({ patientId }: { patientId: string }) {
  const visits = usePatientVisits(patientId);
  const sections = usePatientSections(patientId, TREND_SECTIONS);
  const charts = useMemo(
    () => (visits.data && sections.data ? buildTrends(visits.data, sections.data) : null),
    [visits.data, sections.data],
  );
  return (
    <section className="flc-panel" aria-labelledby="trends-title">
      <h2 id="trends-title">Trends</h2>
      {visits.isError || sections.isError ? (
        <ErrorState
          title="The trends could not be read from this tablet."
          error={visits.error ?? sections.error}
        />
      ) : charts === null ? (
        <LoadingState>Loading trends…</LoadingState>
      ) : (
        <Suspense fallback={<LoadingState>Loading the charts…</LoadingState>}>
          <TrendCharts charts={charts} caution={CLINICAL_CAUTION} />
        </Suspense>
      )}
    </section>
  );
}

export default function ChartScreen() {
  const { patientId } = useParams<{ patientId: string }>();
  const patient = usePatient(patientId);
  const today = localDate();
  let body;
  if (patient.isPending) body = <LoadingState>Loading the Chart from this tablet…</LoadingState>;
  else if (patient.isError)
    body = (
      <ErrorState title="This Chart could not be read from the tablet." error={patient.error} />
    );
  else if (patient.data === null || patient.data.deleted) {
    body = (
      <EmptyState>
        <p>This patient is not on this tablet. They may not have synced yet.</p>
        <Link className="flc-button" to="/today">
          Back to Today
        </Link>
      </EmptyState>
    );
  } else {
    const p = patient.data;
    body = (
      <>
        <section className="flc-panel" aria-labelledby="chart-title">
          <h1 id="chart-title" style={{ margin: 0, fontSize: '1.5rem' }}>
            {patientFullName(p)}
          </h1>
          <p className="fl-muted">
            Born {formatDate(p.fields.dateOfBirth)} ({describeAge(p.fields.dateOfBirth, today)}) ·{' '}
            {p.fields.clinicNumber}
          </p>
        </section>
        <div className="flc-columns">
          <VisitList patient={p} today={today} />
          <PatientDetailsForm key={p.id} patient={p} today={today} />
        </div>
        <Trends patientId={p.id} />
      </>
    );
  }
  return (
    <IonPage>
      <IonHeader>
        <IonToolbar>
          <IonButtons slot="start">
            <IonBackButton defaultHref="/today" text="Back" />
          </IonButtons>
          <IonTitle>Chart</IonTitle>
        </IonToolbar>
      </IonHeader>
      <IonContent>
        <main className="flc-page">{body}</main>
      </IonContent>
    </IonPage>
  );
}
