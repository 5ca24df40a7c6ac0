// Visit: one sitting with a patient. Its Sections are forms saved to IndexedDB as they change,
// the computed interpretation sits beside them with its caution, and the visit is signed,
// countersigned and added to (Addenda) here; the Addenda also show under the interpretation,
// beneath the signed content they add to or correct. Letters sit beside the Sign panel (a letter
// is usually written once the visit is signed); photos and files are a section of their own.
import { YesNoChoice } from '../../components/controls';
import {
  IonBackButton,
  IonButtons,
  IonContent,
  IonHeader,
  IonPage,
  IonTitle,
  IonToolbar,
} from '@ionic/react';
import {
  ageOnDate,
  collectionLabel,
  type SectionCollectionName,
  type VisitSectionValues,
} from '@fuselight/shared';
import { useCallback, useMemo, useState } from 'react';
import { Link, useParams } from 'react-router-dom';
import { AttachmentPanel } from '../../attachments/AttachmentPanel';
import { useAuthState, useSessionStore } from '../../auth/SessionProvider';
import { useSession } from '../../auth/session-context';
import { AcuityEntries } from '../../components/charting/AcuityEntries';
import { AmblyoscopeSummary } from '../../components/charting/AmblyoscopeSummary';
import { InterpretationSummary } from '../../components/charting/InterpretationSummary';
import { SectionForm } from '../../components/charting/SectionForm';
import { SectionPanel } from '../../components/charting/SectionPanel';
import { SignPanel } from '../../components/charting/SignPanel';
import {
  DisputeMark,
  EmptyState,
  ErrorState,
  LoadingState,
  VisitStatusBadge,
} from '../../components/charting/ScreenState';
import { describeAge, formatDate, patientFullName } from '../../components/charting/format';
import type { SaveStatus } from '../../components/charting/useSectionAutosave';
import '../../components/charting/charting.css';
import { useEditContext } from '../../data';
import { LetterPanel } from '../../letters/LetterPanel';
import {
  canEditSections,
  useCharting,
  useVisitBundle,
  type VisitBundle,
} from '../../data/charting';
import { fetchVisitFhir } from './hospital-record';
import { HospitalRecordPanel } from './HospitalRecordPanel';
import { PanelBoundary } from './PanelBoundary';
import { clinicForLetters } from './visit-letterhead';
import { personLabel } from '../../auth/person-names';

interface SectionSpec {
  collection: SectionCollectionName;
  title: string;
  fields?: readonly string[];
}

const SECTIONS: readonly SectionSpec[] = (
  [
    { collection: 'visualAcuity', fields: ['chartUsed', 'skippedReason'] },
    { collection: 'coverTest' },
    { collection: 'prismCoverTest' },
    { collection: 'nearPointConvergence' },
    { collection: 'accommodation' },
    { collection: 'stereoacuity' },
    { collection: 'motility' },
    { collection: 'plan' },
  ] as const satisfies readonly Omit<SectionSpec, 'title'>[]
).map((spec) => ({ ...spec, title: collectionLabel(spec.collection) }));

const JUMPS: readonly [string, string][] = [
  ['section-details', 'Visit'],
  ['section-amblyoscope', 'Amblyoscope'],
  ...SECTIONS.map((s): [string, string] => [`section-${s.collection}`, s.title]),
  ['section-interpretation', 'Interpretation'],
  ['section-sign', 'Sign'],
  ['section-hospital', 'Hospital record'],
  ['section-letters', 'Letters'],
  ['section-attachments', 'Photos and files'],
];

type FoldingProps = { open: boolean; onToggle: (open: boolean) => void };

function VisitDetails({
  bundle,
  locked,
  folding,
}: {
  bundle: VisitBundle;
  locked: boolean;
  folding: FoldingProps;
}) {
  const charting = useCharting();
  const editContext = useEditContext();
  const { visit } = bundle;
  const [reason, setReason] = useState(visit.fields.reason ?? '');
  const [message, setMessage] = useState('');
  const save = async (fields: { reason?: string | null; needsCountersign?: boolean | null }) => {
    setMessage('Saving…');
    try {
      await charting.updateDraftVisit(visit.id, fields, editContext());
      setMessage('Saved on this tablet');
    } catch (error) {
      setMessage(`Not saved: ${error instanceof Error ? error.message : String(error)}`);
    }
  };
  return (
    <SectionPanel
      id="section-details"
      title="Visit"
      aside={
        <span className="flc-saved" role="status" aria-live="polite">
          {message}
        </span>
      }
      folding={{ ...folding, summary: detailsSummary(visit.fields) }}
    >
      <div className="flc-grid">
        <div className="flc-field">
          <label htmlFor="visit-reason">
            Reason for visit
            <DisputeMark field="reason" conflicts={visit.conflicts} />
          </label>
          <input
            id="visit-reason"
            className="flc-input"
            type="text"
            value={reason}
            disabled={locked}
            onChange={(event) => setReason(event.target.value)}
            onBlur={() => {
              if (reason !== (visit.fields.reason ?? ''))
                void save({ reason: reason.trim() === '' ? null : reason });
            }}
          />
        </div>
        <div className="flc-field">
          <YesNoChoice
            label="Needs countersigning"
            value={visit.fields.needsCountersign ?? null}
            disabled={locked}
            onChange={(value) => void save({ needsCountersign: value })}
          />
          <DisputeMark field="needsCountersign" conflicts={visit.conflicts} />
        </div>
      </div>
    </SectionPanel>
  );
}

function detailsSummary(fields: VisitBundle['visit']['fields']): string {
  const countersign =
    fields.needsCountersign === true
      ? 'needs countersigning'
      : fields.needsCountersign === false
        ? 'no countersigning needed'
        : null;
  return (
    [fields.reason ? `Reason: ${fields.reason}` : 'No reason recorded', countersign]
      .filter(Boolean)
      .join(' · ') || 'Nothing recorded yet'
  );
}

/** The panels that fold to one line, in the order of the jump links. */
const FOLDING_IDS: readonly string[] = [
  'section-details',
  'section-amblyoscope',
  ...SECTIONS.map((s) => `section-${s.collection}`),
];

function VisitBody({ bundle }: { bundle: VisitBundle }) {
  const { visit, patient, sections, addenda } = bundle;
  const { user } = useSession();
  const { sites, colleagues } = useAuthState();
  const sessionStore = useSessionStore();
  const loadFhir = useCallback(
    async () =>
      fetchVisitFhir({
        fetch: (input, init) => fetch(input, init),
        token: user ? await sessionStore.tokenFor(user.id) : null,
        visitId: visit.id,
      }),
    [sessionStore, user, visit.id],
  );
  const clinic = useMemo(
    () => clinicForLetters(sites, visit.fields.siteId),
    [sites, visit.fields.siteId],
  );
  const who = useCallback(
    (id: string | null | undefined) => personLabel(colleagues, id, user?.id),
    [colleagues, user],
  );
  const locked = !canEditSections(visit);
  const [statuses, setStatuses] = useState<Record<string, SaveStatus>>({});
  const reporters = useMemo(() => {
    const make = (key: string) => (status: SaveStatus) =>
      setStatuses((current) => (current[key] === status ? current : { ...current, [key]: status }));
    return Object.fromEntries(
      ['amblyoscope', ...SECTIONS.map((s) => s.collection)].map((key) => [key, make(key)]),
    ) as Record<string, (status: SaveStatus) => void>;
  }, []);
  const values = useMemo(() => {
    const out: VisitSectionValues = {};
    for (const [collection, record] of Object.entries(sections)) {
      out[collection as SectionCollectionName] = record.fields as Record<string, unknown>;
    }
    return out;
  }, [sections]);
  const age = patient ? ageOnDate(patient.fields.dateOfBirth, visit.fields.date) : undefined;
  const states = Object.values(statuses);
  const blockedReason = states.some((s) => s === 'invalid' || s === 'error')
    ? 'Fix the values marked in the Sections before signing; they are not saved yet.'
    : states.some((s) => s === 'waiting' || s === 'saving')
      ? 'Saving the last changes…'
      : null;
  // Every Section starts folded to its one-line summary, so the visit reads at a glance; a
  // heading or a jump link opens one in place to edit.
  const [openIds, setOpenIds] = useState<ReadonlySet<string>>(() => new Set());
  const folding = useCallback(
    (id: string): FoldingProps => ({
      open: openIds.has(id),
      onToggle: (open) =>
        setOpenIds((current) => {
          const next = new Set(current);
          if (open) next.add(id);
          else next.delete(id);
          return next;
        }),
    }),
    [openIds],
  );
  const jump = useCallback((id: string) => {
    if (FOLDING_IDS.includes(id)) setOpenIds((current) => new Set(current).add(id));
    // After the opened Section is drawn.
    requestAnimationFrame(() => {
      const target = document.getElementById(id);
      // (jsdom, where the screen's tests run, draws nothing and has no scrolling.)
      if (typeof target?.scrollIntoView === 'function') {
        target.scrollIntoView({ behavior: 'smooth', block: 'start' });
      }
    });
  }, []);
  const allOpen = FOLDING_IDS.every((id) => openIds.has(id));

  return (
    <main className="flc-page">
      <section className="flc-panel" aria-labelledby="visit-title">
        <header>
          <h1 id="visit-title" style={{ margin: 0, fontSize: '1.5rem' }}>
            {patientFullName(patient)} · {formatDate(visit.fields.date)}
          </h1>
          <VisitStatusBadge status={visit.fields.status} />
        </header>
        <p className="fl-muted">
          {patient
            ? `Born ${formatDate(patient.fields.dateOfBirth)} (${describeAge(patient.fields.dateOfBirth, visit.fields.date)} at this visit) · ${patient.fields.clinicNumber}`
            : 'The patient record is not on this tablet yet.'}
          {patient ? (
            <>
              {' · '}
              <Link className="flc-link" to={`/chart/${patient.id}`}>
                Chart
              </Link>
            </>
          ) : null}
        </p>
        {locked ? (
          <p>
            This visit is {visit.fields.status}; its Sections are locked. Changes are added as an
            Addendum below.
          </p>
        ) : null}
      </section>
      {/* Kept in view while the Sections scroll beneath it. */}
      <nav aria-label="Sections of this visit" className="flc-nav flc-nav--sticky">
        {JUMPS.map(([id, label]) => (
          <button key={id} type="button" className="flc-button" onClick={() => jump(id)}>
            {label}
          </button>
        ))}
        <button
          type="button"
          className="flc-button flc-button--quiet"
          onClick={() => setOpenIds(allOpen ? new Set() : new Set(FOLDING_IDS))}
        >
          {allOpen ? 'Fold all Sections' : 'Open all Sections'}
        </button>
      </nav>
      <VisitDetails bundle={bundle} locked={locked} folding={folding('section-details')} />
      <AmblyoscopeSummary
        visitId={visit.id}
        sections={sections}
        locked={locked}
        onStatus={reporters.amblyoscope}
        folding={folding('section-amblyoscope')}
      />
      {SECTIONS.map((spec) => {
        const record = sections[spec.collection] as
          { fields: Record<string, unknown>; conflicts: string[] } | undefined;
        return (
          <SectionForm
            key={spec.collection}
            visitId={visit.id}
            collection={spec.collection}
            title={spec.title}
            record={record}
            locked={locked}
            onStatus={reporters[spec.collection]}
            folding={folding(`section-${spec.collection}`)}
            {...(spec.fields ? { fields: spec.fields } : {})}
          >
            {spec.collection === 'visualAcuity'
              ? (autosave) => (
                  <AcuityEntries
                    autosave={autosave}
                    conflicts={record?.conflicts ?? []}
                    locked={locked}
                  />
                )
              : undefined}
          </SectionForm>
        );
      })}
      <InterpretationSummary sections={values} ageYears={age} addenda={addenda} who={who} />
      <SignPanel bundle={bundle} blockedReason={blockedReason} who={who} />
      <HospitalRecordPanel
        visitId={visit.id}
        status={visit.fields.status}
        fields={visit.fields}
        timeZone={sites[visit.fields.siteId]?.timeZone ?? 'UTC'}
        loadFhir={loadFhir}
      />
      <div id="section-letters">
        <PanelBoundary title="Letters">
          <LetterPanel visitId={visit.id} clinic={clinic} />
        </PanelBoundary>
      </div>
      <div id="section-attachments">
        <PanelBoundary title="Photos and files">
          <AttachmentPanel visitId={visit.id} />
        </PanelBoundary>
      </div>
    </main>
  );
}

export default function VisitScreen() {
  const { visitId } = useParams<{ visitId: string }>();
  const bundle = useVisitBundle(visitId);
  let body;
  if (bundle.isPending) body = <LoadingState>Loading the visit from this tablet…</LoadingState>;
  else if (bundle.isError)
    body = (
      <ErrorState title="This visit could not be read from the tablet." error={bundle.error} />
    );
  else if (bundle.data === null) {
    body = (
      <EmptyState>
        <p>This visit is not on this tablet. It may not have synced yet.</p>
        <Link className="flc-button" to="/today">
          Back to Today
        </Link>
      </EmptyState>
    );
  } else body = <VisitBody key={bundle.data.visit.id} bundle={bundle.data} />;
  return (
    <IonPage>
      <IonHeader>
        <IonToolbar>
          <IonButtons slot="start">
            <IonBackButton defaultHref="/today" text="Back" />
          </IonButtons>
          <IonTitle>Visit</IonTitle>
        </IonToolbar>
      </IonHeader>
      <IonContent>{body}</IonContent>
    </IonPage>
  );
}
