// The Bench: guided, full-screen capture at the major amblyoscope, one step per screen in the
// order the trade measures, with a step list to skip ahead or go back. Every entry is saved to
// the tablet as it is made (see useBenchSection); nothing waits for a Save button.
import { IonContent, IonPage, useIonViewWillEnter, useIonViewWillLeave } from '@ionic/react';
import { type ConversionMethod, fieldMeta } from '@fuselight/shared';
import { type FocusEvent, useCallback, useEffect, useRef, useState } from 'react';
import { Link, useNavigate, useParams, useSearchParams } from 'react-router-dom';
import { ConversionContext } from '../../components/controls';
import { sendBenchAction } from '../../components/controls/bench-action';
import { SyncIndicator } from '../../components/SyncIndicator';
import {
  BenchJournalContext,
  type BenchJournalEntry,
  readConversionPreference,
  sectionProgress,
  writeConversionPreference,
} from '../../data/bench';
import { useVisitBundle } from '../../data/charting';
import { requestSyncNow } from '../../sync';
import { BENCH_STEPS, type BenchStepId, stepById } from './bench-steps';
import { ACTION_LABELS, type BenchAction } from './keys/bench-key-map';
import {
  benchTargets,
  focusTarget,
  focusedTarget,
  isTextField,
  stepChoice,
  targetName,
} from './keys/bench-targets';
import { sayAloud } from './keys/bench-voice';
import { BenchLegend, type TargetKind } from './keys/BenchLegend';
import { useBenchKeyPreferences } from './keys/useBenchKeyPreferences';
import { useBenchKeys } from './keys/useBenchKeys';
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

const STEP_KEYS: Partial<Record<BenchStepId, readonly BenchAction[]>> = {
  'suppression-scotoma': ['markLost'],
  'fusional-ranges': ['markBreak', 'markRecovery'],
  'gross-stereopsis': ['stereoToward', 'stereoAway'],
};

/** Actions that act on a control: with none in use, the step's first control takes them. */
const CONTROL_ACTIONS: ReadonlySet<BenchAction> = new Set([
  'toggleSign',
  'stepUpSmall',
  'stepDownSmall',
  'stepUpMedium',
  'stepDownMedium',
  'stepUpLarge',
  'stepDownLarge',
]);

const STEP_DIRECTION: Partial<Record<BenchAction, 1 | -1>> = {
  stepUpSmall: 1,
  stepUpMedium: 1,
  stepUpLarge: 1,
  stepDownSmall: -1,
  stepDownMedium: -1,
  stepDownLarge: -1,
};

function kindOf(target: HTMLElement | null): TargetKind {
  if (!target) return 'none';
  if (target.matches('.fl-angle__readout')) return 'angle';
  if (target.matches('fieldset')) return 'choice';
  if (isTextField(target)) return 'text';
  return 'button';
}

/** An undone entry in words: each field's label and the value it is back to. */
function describeUndo(entry: BenchJournalEntry): string {
  const meta = fieldMeta[entry.collection] as Record<string, { label?: string } | undefined>;
  return Object.entries(entry.previous)
    .filter(([name]) => name !== 'normsTable')
    .map(([name, value]) => {
      const label = name === 'skippedReason' ? 'Not done' : (meta[name]?.label ?? name);
      const words =
        value === null || value === undefined
          ? 'not recorded'
          : Array.isArray(value)
            ? `${value.length} trial${value.length === 1 ? '' : 's'}`
            : typeof value === 'boolean'
              ? value
                ? 'yes'
                : 'no'
              : String(value);
      return `${label} back to ${words}`;
    })
    .join('; ');
}

/** The Bench without the Ionic page around it (tests render this). */
export function Bench({
  visitId,
  random,
  active = true,
}: {
  visitId: string;
  random?: () => number;
  /** False while the Bench is not the page in view (its keys then rest). */
  active?: boolean;
}) {
  const [params, setParams] = useSearchParams();
  const step = stepById(params.get('step'));
  const index = BENCH_STEPS.indexOf(step);
  const bundle = useVisitBundle(visitId);
  const [conversion, setConversion] = useState<ConversionMethod>(readConversionPreference);
  const mainRef = useRef<HTMLDivElement>(null);
  const navigate = useNavigate();
  const { preferences, save: savePreferences } = useBenchKeyPreferences();
  const [announcement, setAnnouncement] = useState('');
  const [kind, setKind] = useState<TargetKind>('none');
  const journal = useRef<BenchJournalEntry[]>([]);
  const recordEntry = useCallback((entry: BenchJournalEntry) => {
    journal.current.push(entry);
  }, []);

  const go = (id: BenchStepId) => {
    setParams({ step: id }, { replace: true });
  };
  useEffect(() => {
    mainRef.current?.querySelector<HTMLElement>('#fl-bench-step-title')?.focus();
  }, [step.id]);

  /** Tells screen readers (and, when the person asked for it, says aloud) what a key did. */
  const announce = (text: string) => {
    if (!text) return;
    // The same words twice in a row are still read: a no-break space makes them differ.
    setAnnouncement((previous) => (previous === text ? `${text}\u00a0` : text));
    if (preferences.speak) sayAloud(text);
  };

  const moveStep = (by: 1 | -1) => {
    const next = BENCH_STEPS[index + by];
    if (!next) {
      announce(by > 0 ? 'This is the last step.' : 'This is the first step.');
      return;
    }
    go(next.id);
    announce(`Step ${index + by + 1} of ${BENCH_STEPS.length}: ${next.title}`);
  };

  const runAction = async (action: BenchAction) => {
    switch (action) {
      case 'nextStep':
        return moveStep(1);
      case 'previousStep':
        return moveStep(-1);
      case 'leaveBench':
        navigate(`/visit/${visitId}`);
        return;
      case 'syncNow': {
        announce('Sync started.');
        const outcome = await requestSyncNow();
        announce(
          outcome.kind === 'synced'
            ? `Sync done: ${outcome.pushed} sent, ${outcome.pulled} received.`
            : outcome.kind === 'offline'
              ? 'Offline: everything stays saved on this tablet and is sent later.'
              : `Sync not done: ${outcome.message}.`,
        );
        return;
      }
      case 'undo': {
        const entry = journal.current.pop();
        if (!entry) {
          announce('Nothing to undo on the Bench in this sitting.');
          return;
        }
        const done = await entry.revert();
        announce(done ? `Undone: ${describeUndo(entry)}.` : 'Undo was not saved; see the step.');
        return;
      }
      default:
        break;
    }
    const stepElement = mainRef.current?.querySelector<HTMLElement>('.fl-bench-step') ?? null;
    if (!stepElement) return;
    if (action === 'skipStep') {
      const said = sendBenchAction(stepElement, action, false);
      announce(said ?? 'This step cannot be skipped.');
      return;
    }
    const targets = benchTargets(stepElement);
    let target = focusedTarget(stepElement);
    if (!target && CONTROL_ACTIONS.has(action) && targets[0]) {
      target = targets[0];
      focusTarget(target);
    }
    if (target) {
      const said = sendBenchAction(target, action);
      if (said !== null) return announce(said);
    }
    if (action !== 'nextControl' && action !== 'previousControl') {
      for (const handler of stepElement.querySelectorAll('[data-bench-handler]')) {
        const said = sendBenchAction(handler, action, false);
        if (said !== null) return announce(said);
      }
    }
    if (action === 'nextControl' || action === 'previousControl') {
      if (targets.length === 0) return announce('This step has no controls.');
      const at = target ? targets.indexOf(target) : -1;
      const next =
        action === 'nextControl'
          ? targets[(at + 1) % targets.length]!
          : targets[at <= 0 ? targets.length - 1 : at - 1]!;
      focusTarget(next);
      if (preferences.speak) sayAloud(targetName(next));
      return;
    }
    const direction = STEP_DIRECTION[action];
    if (target?.matches('fieldset') && direction) {
      const said = stepChoice(target, direction);
      if (said) return announce(said);
    }
    announce(`${ACTION_LABELS[action]}: not on ${target ? targetName(target) : 'this step'}.`);
  };

  useBenchKeys({
    keys: preferences.keys,
    active,
    onAction: (action) => void runAction(action),
  });

  const onFocusIn = (event: FocusEvent<HTMLDivElement>) => {
    const stepElement = mainRef.current?.querySelector('.fl-bench-step') ?? null;
    setKind(
      kindOf(
        stepElement?.contains(event.target)
          ? (event.target as HTMLElement).closest<HTMLElement>(
              '.fl-angle__readout, fieldset.fl-choice, .fl-bench-field input, [data-bench-target], button',
            )
          : null,
      ),
    );
  };

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
  const patientLine = `${
    patient
      ? ` · ${patient.fields.givenName} ${patient.fields.familyName}`
      : ' · patient not on this tablet'
  } · ${visit.fields.date}`;

  return (
    <ConversionContext.Provider value={conversion}>
      <BenchJournalContext.Provider value={recordEntry}>
        <div className="fl-bench" onFocus={onFocusIn}>
          <header className="fl-bench__bar">
            <div>
              <h1 className="fl-bench__title" title={`Bench${patientLine}`}>
                Bench
                <span className="fl-bench__patient">{patientLine}</span>
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
            <div className="fl-bench__nav">
              <button
                type="button"
                className="fl-touch fl-button"
                disabled={index === 0}
                aria-label={index > 0 ? `Back: ${BENCH_STEPS[index - 1]!.title}` : 'Back'}
                onClick={() => go(BENCH_STEPS[index - 1]!.id)}
              >
                ← Back
              </button>
              {index < BENCH_STEPS.length - 1 ? (
                <button
                  type="button"
                  className="fl-touch fl-button fl-button--primary"
                  aria-label={`Next: ${BENCH_STEPS[index + 1]!.title}`}
                  onClick={() => go(BENCH_STEPS[index + 1]!.id)}
                >
                  Next →
                </button>
              ) : null}
            </div>
            <BenchLegend
              keys={preferences.keys}
              kind={kind}
              stepActions={STEP_KEYS[step.id] ?? []}
              shown={preferences.legend}
              onToggle={() => void savePreferences({ ...preferences, legend: !preferences.legend })}
            />
          </nav>

          <main className="fl-bench__main" ref={mainRef}>
            {locked ? (
              <p className="fl-bench-warning" role="alert">
                This visit is signed, so its Sections are locked. Changes here will be refused;
                write an Addendum on the Visit instead.
              </p>
            ) : null}
            <BenchStepView visitId={visitId} stepId={step.id} {...(random ? { random } : {})} />
            <p
              className="fl-visually-hidden"
              role="status"
              aria-live="polite"
              data-testid="bench-announcer"
            >
              {announcement}
            </p>
          </main>
        </div>
      </BenchJournalContext.Provider>
    </ConversionContext.Provider>
  );
}

export default function BenchScreen() {
  const { visitId = '' } = useParams();
  const [inView, setInView] = useState(true);
  // Full screen: the tab bar is hidden while the Bench is the page in view.
  useIonViewWillEnter(() => {
    document.body.classList.add(FULL_SCREEN_CLASS);
    setInView(true);
  });
  useIonViewWillLeave(() => {
    document.body.classList.remove(FULL_SCREEN_CLASS);
    setInView(false);
  });
  useEffect(() => {
    document.body.classList.add(FULL_SCREEN_CLASS);
    return () => document.body.classList.remove(FULL_SCREEN_CLASS);
  }, []);
  return (
    <IonPage>
      <IonContent>
        <Bench visitId={visitId} active={inView} />
      </IonContent>
    </IonPage>
  );
}
