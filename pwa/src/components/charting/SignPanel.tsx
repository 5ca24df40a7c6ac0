// Signing, countersigning and addenda. Signing locks the visit's Sections; anything added after
// is an Addendum, kept beside the signed content and never mixed into it.
import { useState } from 'react';
import { useSession } from '../../auth/session-context';
import { useEditContext } from '../../data';
import {
  canAddAddendum,
  canCountersign,
  canSign,
  useCharting,
  type VisitBundle,
} from '../../data/charting';
import { AddendaList, when } from './AddendaList';
import { DisputeMark, VisitStatusBadge } from './ScreenState';

export function SignPanel({
  bundle,
  blockedReason,
  who,
}: {
  bundle: VisitBundle;
  /** Why signing must wait (unsaved or refused values), or null. */
  blockedReason: string | null;
  /** A person's name as this screen shows it ("you", a colleague's name, or a stand-in). */
  who: (id: string | null | undefined) => string;
}) {
  const { user } = useSession();
  const charting = useCharting();
  const editContext = useEditContext();
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const [addendum, setAddendum] = useState('');
  const [addendumMessage, setAddendumMessage] = useState<string | null>(null);
  const { visit, addenda } = bundle;
  const fields = visit.fields;
  const signAnswer = canSign(visit, user);
  const countersignAnswer = canCountersign(visit, user);
  const addendumAnswer = canAddAddendum(visit, user);

  const act = async (action: () => Promise<unknown>) => {
    setError(null);
    setBusy(true);
    try {
      await action();
    } catch (caught) {
      setError(caught instanceof Error ? caught.message : String(caught));
    } finally {
      setBusy(false);
    }
  };

  return (
    <section className="flc-panel" aria-labelledby="sign-title" id="section-sign">
      <header>
        <h2 id="sign-title">Sign and Addenda</h2>
        <VisitStatusBadge status={fields.status} />
      </header>
      {fields.status === 'draft' ? (
        <>
          <p>Signing locks this visit’s Sections. Anything added later becomes an Addendum.</p>
          {signAnswer !== true ? <p className="fl-muted">{signAnswer}</p> : null}
          {blockedReason ? <p className="flc-message flc-message--error">{blockedReason}</p> : null}
          <button
            type="button"
            className="flc-button flc-button--primary"
            disabled={busy || signAnswer !== true || blockedReason !== null}
            onClick={() => user && void act(() => charting.sign(visit.id, user, editContext()))}
          >
            Sign visit
          </button>
        </>
      ) : (
        <p>
          Signed by {who(fields.signedBy)} at {when(fields.signedAt)}
          <DisputeMark field="signedAt" conflicts={visit.conflicts} />.
          {fields.status === 'countersigned'
            ? ` Countersigned by ${who(fields.countersignedBy)} at ${when(fields.countersignedAt)}.`
            : fields.needsCountersign
              ? ' Waiting for a supervisor to countersign.'
              : ''}
        </p>
      )}
      {fields.status === 'signed' && fields.needsCountersign ? (
        <div className="flc-actions">
          <button
            type="button"
            className="flc-button flc-button--primary"
            disabled={busy || countersignAnswer !== true}
            onClick={() =>
              user && void act(() => charting.countersign(visit.id, user, editContext()))
            }
          >
            Countersign
          </button>
          {countersignAnswer !== true ? <p className="fl-muted">{countersignAnswer}</p> : null}
        </div>
      ) : null}
      <p className="flc-message flc-message--error" role="alert">
        {error ?? ''}
      </p>

      <h3>Addenda</h3>
      {addenda.length === 0 ? (
        <p className="fl-muted">No Addenda.</p>
      ) : (
        <AddendaList addenda={addenda} label="Addenda" who={(id) => who(id)} />
      )}
      {addendumAnswer === true ? (
        <form
          onSubmit={(event) => {
            event.preventDefault();
            if (!user) return;
            setAddendumMessage(null);
            if (addendum.trim() === '') {
              setAddendumMessage('Write what the Addendum adds or corrects.');
              return;
            }
            void act(async () => {
              await charting.addAddendum(visit.id, { text: addendum, author: user }, editContext());
              setAddendum('');
              setAddendumMessage('Addendum saved on this tablet.');
            });
          }}
        >
          <div className="flc-field">
            <label htmlFor="addendum-text">New Addendum</label>
            <textarea
              id="addendum-text"
              className="flc-input"
              value={addendum}
              aria-describedby="addendum-message"
              onChange={(event) => setAddendum(event.target.value)}
            />
            <p id="addendum-message" className="flc-message" role="status">
              {addendumMessage ?? ''}
            </p>
          </div>
          <button type="submit" className="flc-button" disabled={busy || !user}>
            Add Addendum
          </button>
        </form>
      ) : (
        <p className="fl-muted">{addendumAnswer}</p>
      )}
    </section>
  );
}
