// The hospital record on the Visit: whether the signed visit reached it (written by the clinic
// server's hand-off, so it shows offline too) and "Download FHIR", which needs the server.
import { memo, useEffect, useState } from 'react';
import type { VisitStatus } from '@fuselight/shared';
import { hospitalRecordWords, type HospitalRecordFields } from './hospital-record';

function useOnline(): boolean {
  const [online, setOnline] = useState(() => navigator.onLine);
  useEffect(() => {
    const update = () => setOnline(navigator.onLine);
    window.addEventListener('online', update);
    window.addEventListener('offline', update);
    return () => {
      window.removeEventListener('online', update);
      window.removeEventListener('offline', update);
    };
  }, []);
  return online;
}

function HospitalRecordPanelView({
  visitId,
  status,
  fields,
  timeZone,
  loadFhir,
}: {
  visitId: string;
  status: VisitStatus;
  fields: HospitalRecordFields;
  timeZone: string;
  /** The visit's Bundle from the clinic server (JSON text). */
  loadFhir: () => Promise<string>;
}) {
  const online = useOnline();
  const [busy, setBusy] = useState(false);
  const [message, setMessage] = useState<string | null>(null);
  const state = hospitalRecordWords(fields, timeZone);
  if (status === 'draft') {
    return (
      <section className="flc-panel" aria-labelledby="hospital-record-title" id="section-hospital">
        <header>
          <h2 id="hospital-record-title">Hospital record</h2>
        </header>
        <p data-testid="hospital-record-state">
          Once signed, this visit is sent to the hospital record (where the clinic server is set up
          for it) and can be downloaded as FHIR.
        </p>
      </section>
    );
  }

  const download = async () => {
    setBusy(true);
    setMessage('Fetching the FHIR export from the clinic server…');
    try {
      const text = await loadFhir();
      const url = URL.createObjectURL(new Blob([text], { type: 'application/fhir+json' }));
      const link = document.createElement('a');
      link.href = url;
      link.download = `visit-${visitId}.fhir.json`;
      link.click();
      setTimeout(() => URL.revokeObjectURL(url), 10_000);
      setMessage('FHIR export downloaded.');
    } catch (error) {
      setMessage(`Not downloaded: ${error instanceof Error ? error.message : String(error)}`);
    } finally {
      setBusy(false);
    }
  };

  return (
    <section className="flc-panel" aria-labelledby="hospital-record-title" id="section-hospital">
      <header>
        <h2 id="hospital-record-title">Hospital record</h2>
      </header>
      <p role="status" aria-live="polite" data-testid="hospital-record-state">
        {state ?? 'Not handed to a hospital record from this clinic server.'}
      </p>
      <button
        type="button"
        className="flc-button"
        disabled={busy || !online}
        onClick={() => void download()}
      >
        Download FHIR
      </button>
      {!online ? (
        <p className="fl-muted">Download FHIR needs a connection to the clinic server.</p>
      ) : null}
      {message ? (
        <p role="alert" className="fl-muted">
          {message}
        </p>
      ) : null}
    </section>
  );
}

/** Memoised: the Visit re-renders on every keystroke of a Section, this panel only when it changes. */
export const HospitalRecordPanel = memo(HospitalRecordPanelView);
