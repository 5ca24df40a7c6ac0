// The You screen's Bench keys: which key does each Bench action for the person using the tablet,
// changed by pressing the new key, with a refusal in words when the key already does something
// else, a reset to the defaults (asked first), the spoken values and the legend. Kept for this
// person on this tablet (auth/person-settings.ts), so it works offline.
import { useState, type KeyboardEvent } from 'react';
import { Button, Confirmation } from '../../auth/ui/controls';
import {
  ACTION_LABELS,
  BENCH_ACTIONS,
  type BenchAction,
  type BenchKeyPreferences,
  DEFAULT_BENCH_KEY_PREFERENCES,
  addKey,
  isDefaultMapping,
  keyLabel,
  keyOfEvent,
  removeKey,
} from '../bench/keys/bench-key-map';
import { offlineVoice, speechAvailable } from '../bench/keys/bench-voice';
import { useBenchKeyPreferences } from '../bench/keys/useBenchKeyPreferences';

export function BenchKeysSettings() {
  const { preferences, loaded, save } = useBenchKeyPreferences();
  const [listening, setListening] = useState<BenchAction | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  const [notice, setNotice] = useState<string | null>(null);
  const [confirmingReset, setConfirmingReset] = useState(false);

  const store = (next: BenchKeyPreferences, done: string) => {
    save(next).then(
      () => setNotice(done),
      (error: unknown) =>
        setProblem(
          `Bench keys not saved on this tablet: ${error instanceof Error ? error.message : String(error)}`,
        ),
    );
  };

  const capture = (action: BenchAction, event: KeyboardEvent<HTMLButtonElement>) => {
    if (event.code === 'Tab') {
      setListening(null);
      return;
    }
    event.preventDefault();
    event.stopPropagation();
    if (event.code === 'Escape') {
      setListening(null);
      setNotice('No key changed.');
      return;
    }
    const key = keyOfEvent(event);
    if (key === null) return; // a modifier alone: wait for the key it goes with
    setListening(null);
    const result = addKey(preferences.keys, action, key);
    if (!result.ok) {
      setProblem(result.problem);
      return;
    }
    setProblem(null);
    store(
      { ...preferences, keys: result.map },
      `${keyLabel(key)} now does “${ACTION_LABELS[action]}”.`,
    );
  };

  const voice = speechAvailable() ? offlineVoice() : null;

  return (
    <section aria-labelledby="fl-bench-keys-title" className="fl-bench-keys">
      <h2 id="fl-bench-keys-title" style={{ fontSize: '1.1rem' }}>
        Bench keys
      </h2>
      <p>
        Work the Bench from a foot pedal, a presentation clicker, a numeric keypad or a keyboard.
        Your keys are kept for you on this tablet and work offline. Keys never act while you type in
        a text field; Tab, Enter and Space keep moving between and pressing the buttons.
      </p>
      {!loaded ? (
        <p role="status">Reading your Bench keys…</p>
      ) : (
        <>
          <label className="fl-bench-keys__option">
            <input
              type="checkbox"
              checked={preferences.speak}
              onChange={(event) =>
                store(
                  { ...preferences, speak: event.target.checked },
                  event.target.checked
                    ? 'The Bench will say each recorded value aloud.'
                    : 'The Bench will not speak.',
                )
              }
            />{' '}
            Say each recorded value aloud on the Bench
          </label>
          <p className="fl-muted" style={{ marginTop: 0 }}>
            {!speechAvailable()
              ? 'This browser cannot speak.'
              : voice
                ? `Voice on this tablet: ${voice.name}.`
                : 'No voice is installed on this tablet itself; speaking may need the network.'}
          </p>
          <label className="fl-bench-keys__option">
            <input
              type="checkbox"
              checked={preferences.legend}
              onChange={(event) =>
                store(
                  { ...preferences, legend: event.target.checked },
                  event.target.checked ? 'The key legend shows on the Bench.' : 'Legend hidden.',
                )
              }
            />{' '}
            Show which key does what on the Bench
          </label>
          {problem ? (
            <p role="alert" className="fl-id-error">
              {problem}
            </p>
          ) : null}
          <p role="status" aria-live="polite" className="fl-muted">
            {notice ?? ''}
          </p>
          <table className="fl-bench-keys__table">
            <caption className="fl-visually-hidden">Your Bench keys</caption>
            <thead>
              <tr>
                <th scope="col">Action</th>
                <th scope="col">Keys</th>
                <th scope="col">
                  <span className="fl-visually-hidden">Change</span>
                </th>
              </tr>
            </thead>
            <tbody>
              {BENCH_ACTIONS.map((action) => (
                <tr key={action} data-action={action}>
                  <th scope="row">{ACTION_LABELS[action]}</th>
                  <td>
                    {preferences.keys[action].length === 0 ? (
                      <span className="fl-muted">no key</span>
                    ) : (
                      <ul className="fl-bench-keys__keys">
                        {preferences.keys[action].map((key) => (
                          <li key={key}>
                            <kbd>{keyLabel(key)}</kbd>
                            <button
                              type="button"
                              className="fl-bench-keys__remove"
                              aria-label={`Remove ${keyLabel(key)} from ${ACTION_LABELS[action]}`}
                              onClick={() =>
                                store(
                                  {
                                    ...preferences,
                                    keys: removeKey(preferences.keys, action, key),
                                  },
                                  `${keyLabel(key)} no longer does “${ACTION_LABELS[action]}”.`,
                                )
                              }
                            >
                              ×
                            </button>
                          </li>
                        ))}
                      </ul>
                    )}
                  </td>
                  <td>
                    <Button
                      tone="quiet"
                      aria-label={
                        listening === action
                          ? `Press the new key for ${ACTION_LABELS[action]} (Esc to cancel)`
                          : `Add a key for ${ACTION_LABELS[action]}`
                      }
                      onClick={() => {
                        setProblem(null);
                        setNotice(null);
                        setListening(listening === action ? null : action);
                      }}
                      onKeyDown={(event) => {
                        if (listening === action) capture(action, event);
                      }}
                      onBlur={() => {
                        if (listening === action) setListening(null);
                      }}
                    >
                      {listening === action ? 'Press a key…' : 'Add key'}
                    </Button>
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
          <div className="fl-id-row">
            <Button
              tone="quiet"
              disabled={isDefaultMapping(preferences.keys)}
              onClick={() => setConfirmingReset(true)}
            >
              Reset Bench keys to the defaults
            </Button>
          </div>
          {confirmingReset ? (
            <Confirmation
              title="Reset your Bench keys?"
              confirmLabel="Reset keys"
              onCancel={() => setConfirmingReset(false)}
              onConfirm={() => {
                setConfirmingReset(false);
                setProblem(null);
                store(
                  { ...preferences, keys: DEFAULT_BENCH_KEY_PREFERENCES.keys },
                  'Bench keys are back to the defaults.',
                );
              }}
            >
              Every key you changed goes back to the default. Spoken values and the legend stay as
              they are.
            </Confirmation>
          ) : null}
        </>
      )}
    </section>
  );
}
