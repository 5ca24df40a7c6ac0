// The Bench: guided, full-screen capture at the major amblyoscope, one step per screen in the
// order the trade measures, with a step list to skip ahead or go back. Every entry is saved to
// the tablet as it is made (see useBenchSection); nothing waits for a Save button.
import { IonContent, IonPage, useIonViewWillEnter, useIonViewWillLeave } from '@ionic/react';
import type { ConversionMethod } from '@fuselight/shared';
import { useEffect, useRef, useState } from 'react';
import { Link, useParams, useSearchParams } from 'react-router-dom';
import { ConversionContext } from '../../components/controls';
import { SyncIndicator } from '../../components/SyncIndicator';
import {
  readConversionPreference,
  sectionProgress,
  writeConversionPreference,
} from '../../data/bench';
import { useVisitBundle } from '../../data/charting';
import { BENCH_STEPS, type BenchStepId, stepById } from './bench-steps';
import { ObjectiveAngleStep, SubjectiveAngleStep } from './steps/AngleSteps';
import { FusionStep } from './steps/FusionStep';
import { FusionalRangesStep } from './steps/FusionalRangesStep';
import { GrossStereopsisStep } from './steps/GrossStereopsisStep';
import { ScotomaStep } from './steps/ScotomaStep';
import { SetupStep } from './steps/SetupStep';
import { SimultaneousPerceptionStep } from './steps/SimultaneousPerceptionStep';
import { SummaryStep } from './steps/SummaryStep';
import './bench.css';

const FULL_SCREEN_CLASS = 'fl-bench-open';

export function BenchStepView({
  visitId,
  stepId,
  random,
}: {
  visitId: string;
  stepId: BenchStepId;
  random?: () => number;
}) {
  switch (stepId) {
    case 'setup':
      return <SetupStep visitId={visitId} />;
    case 'simultaneous-perception':
      return <SimultaneousPerceptionStep visitId={visitId} />;
    case 'subjective-angle':
      return <SubjectiveAngleStep visitId={visitId} />;
    case 'objective-angle':
      return <ObjectiveAngleStep visitId={visitId} />;
    case 'suppression-scotoma':
      return <ScotomaStep visitId={visitId} />;
    case 'fusion':
      return <FusionStep visitId={visitId} />;
    case 'fusional-ranges':
      return <FusionalRangesStep visitId={visitId} />;
    case 'gross-stereopsis':
      return <GrossStereopsisStep visitId={visitId} {...(random ? { random } : {})} />;
    case 'summary':
      return <SummaryStep visitId={visitId} />;
  }
}

/** The Bench without the Ionic page around it (tests render this). */
export function Bench({ visitId, random }: { visitId: string; random?: () => number }) {
  const [params, setParams] = useSearchParams();
  const step = stepById(params.get('step'));
  const index = BENCH_STEPS.indexOf(step);
  const bundle = useVisitBundle(visitId);
  const [conversion, setConversion] = useState<ConversionMethod>(readConversionPreference);
  const mainRef = useRef<HTMLDivElement>(null);

  const go = (id: BenchStepId) => {
    setParams({ step: id }, { replace: true });
  };
  useEffect(() => {
    mainRef.current?.querySelector<HTMLElement>('#fl-bench-step-title')?.focus();
  }, [step.id]);

  if (bundle.isPending) {
    return (
      <p role="status" className="fl-bench-message">
        Opening the visit on this tablet…
      </p>
    );
  }
  if (!bundle.data) {
    return (
      <div className="fl-bench-message" role="alert">
        <p>This visit is not on this tablet. Open it from Today or the patient&apos;s Chart.</p>
        <Link to="/today">Back to Today</Link>
      </div>
    );
  }
  const { patient, visit } = bundle.data;
  const locked = visit.fields.status !== 'draft';

  return (
    <ConversionContext.Provider value={conversion}>
      <div className="fl-bench">
        <header className="fl-bench__bar">
          <div>
            <h1 className="fl-bench__title">
              Bench
              <span className="fl-bench__patient">
                {patient
                  ? ` · ${patient.fields.givenName} ${patient.fields.familyName}`
                  : ' · patient not on this tablet'}{' '}
                · {visit.fields.date}
              </span>
            </h1>
          </div>
          <div className="fl-bench__tools">
            <div className="fl-segmented" role="group" aria-label="Prism dioptres shown by">
              {(['exact', 'rule of thumb'] as const).map((method) => (
                <button
                  key={method}
                  type="button"
                  className="fl-touch fl-segmented__option"
                  aria-pressed={conversion === method}
                  onClick={() => {
                    setConversion(method);
                    writeConversionPreference(method);
                  }}
                >
                  Δ {method}
                </button>
              ))}
            </div>
            {/* The one sync indicator on the Bench: the shell's dock is hidden here. */}
            <SyncIndicator compact />
            <Link className="fl-touch fl-button fl-bench__leave" to={`/visit/${visitId}`}>
              Leave the Bench
            </Link>
          </div>
        </header>

        <nav className="fl-bench__steps" aria-label="Bench steps">
          <ol>
            {BENCH_STEPS.map((s, i) => {
              const progress = s.collection
                ? sectionProgress(bundle.data, s.collection, s.fields)
                : 'empty';
              const words = { empty: '', recorded: 'recorded', skipped: 'not done' }[progress];
              return (
                <li key={s.id}>
                  <button
                    type="button"
                    className={`fl-touch fl-bench__step fl-bench__step--${progress}`}
                    aria-current={s.id === step.id ? 'step' : undefined}
                    onClick={() => go(s.id)}
                  >
                    <span className="fl-bench__step-number">{i + 1}</span>
                    <span>{s.title}</span>
                    {words ? <span className="fl-bench__step-state">{words}</span> : null}
                  </button>
                </li>
              );
            })}
          </ol>
          <progress
            className="fl-bench__progress"
            max={BENCH_STEPS.length}
            value={index + 1}
            aria-label={`Step ${index + 1} of ${BENCH_STEPS.length}`}
          />
        </nav>

        <main className="fl-bench__main" ref={mainRef}>
          {locked ? (
            <p className="fl-bench-warning" role="alert">
              This visit is signed, so its Sections are locked. Changes here will be refused; write
              an Addendum on the Visit instead.
            </p>
          ) : null}
          <BenchStepView visitId={visitId} stepId={step.id} {...(random ? { random } : {})} />
          <div className="fl-bench__nav">
            <button
              type="button"
              className="fl-touch fl-button"
              disabled={index === 0}
              onClick={() => go(BENCH_STEPS[index - 1]!.id)}
            >
              ← {index > 0 ? BENCH_STEPS[index - 1]!.title : 'Back'}
            </button>
            {index < BENCH_STEPS.length - 1 ? (
              <button
                type="button"
                className="fl-touch fl-button fl-button--primary"
                onClick={() => go(BENCH_STEPS[index + 1]!.id)}
              >
                Next: {BENCH_STEPS[index + 1]!.title} →
              </button>
            ) : null}
          </div>
        </main>
      </div>
    </ConversionContext.Provider>
  );
}

export default function BenchScreen() {
  const { visitId = '' } = useParams();
  // Full screen: the tab bar is hidden while the Bench is the page in view.
  useIonViewWillEnter(() => document.body.classList.add(FULL_SCREEN_CLASS));
  useIonViewWillLeave(() => document.body.classList.remove(FULL_SCREEN_CLASS));
  useEffect(() => {
    document.body.classList.add(FULL_SCREEN_CLASS);
    return () => document.body.classList.remove(FULL_SCREEN_CLASS);
  }, []);
  return (
    <IonPage>
      <IonContent>
        <Bench visitId={visitId} />
      </IonContent>
    </IonPage>
  );
}
