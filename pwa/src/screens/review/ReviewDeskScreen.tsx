// The Review desk: the supervisor's work area. Disputes (the table, one dispute side by side,
// bulk resolution with a preview), the Countersign queue, and record histories. Supervisors
// only; everyone else is told plainly who it is for.
import { IonContent, IonHeader, IonPage, IonTitle, IonToolbar } from '@ionic/react';
import { useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { useSession } from '../../auth/session-context';
import { CountersignPanel } from './CountersignPanel';
import { DisputeView } from './DisputeView';
import { DisputesPanel } from './DisputesPanel';
import { HistoryPanel, type HistoryTarget } from './HistoryPanel';
import { type ReviewApi } from './review-api';
import { ReviewApiProvider, useReviewApi, useSessionReviewApi } from './review-context';
import './review.css';
import { queryKeys } from '../../data/query-keys';

type Tab = 'disputes' | 'countersign' | 'history';

function OneDispute({
  id,
  onDone,
  onHistory,
}: {
  id: string;
  onDone: (message: string | null) => void;
  onHistory: (t: HistoryTarget) => void;
}) {
  const api = useReviewApi();
  const queryClient = useQueryClient();
  const dispute = useQuery({
    queryKey: queryKeys.review.dispute(id),
    queryFn: () => api.dispute(id),
  });
  if (dispute.isPending) return <p role="status">Loading the dispute…</p>;
  if (dispute.isError) {
    return (
      <div role="alert">
        <p>The dispute could not be loaded: {dispute.error.message}</p>
        <button type="button" className="fl-touch fl-button" onClick={() => onDone(null)}>
          Back to Disputes
        </button>
      </div>
    );
  }
  return (
    <DisputeView
      dispute={dispute.data}
      now={new Date()}
      onClose={() => onDone(null)}
      onOpenHistory={(collection, recordId) => onHistory({ collection, recordId })}
      onResolve={async (request) => {
        await api.resolve(id, request as never);
        await queryClient.invalidateQueries({ queryKey: queryKeys.review.all() });
        onDone(
          dispute.data.signedVisit
            ? 'Resolved as an Addendum to the Signed visit.'
            : 'Dispute resolved; every tablet gets the value on its next sync.',
        );
      }}
    />
  );
}

export function ReviewDesk({ api }: { api: ReviewApi }) {
  const [tab, setTab] = useState<Tab>('disputes');
  const [disputeId, setDisputeId] = useState<string | null>(null);
  const [historyTarget, setHistoryTarget] = useState<HistoryTarget | null>(null);
  const [message, setMessage] = useState<string | null>(null);
  const summary = useQuery({
    queryKey: queryKeys.review.summary(),
    queryFn: () => api.summary(),
    refetchInterval: 30_000,
  });
  const count = (n: number | undefined) => (n === undefined ? '' : ` (${n})`);
  const openHistory = (target: HistoryTarget) => {
    setHistoryTarget(target);
    setTab('history');
  };
  const tabs: { id: Tab; label: string }[] = [
    { id: 'disputes', label: `Disputes${count(summary.data?.openDisputes)}` },
    { id: 'countersign', label: `Countersign${count(summary.data?.awaitingCountersign)}` },
    { id: 'history', label: 'Record history' },
  ];
  return (
    <ReviewApiProvider api={api}>
      <div className="fl-review">
        <div className="fl-segmented fl-review-tabs" role="group" aria-label="Review desk sections">
          {tabs.map((t) => (
            <button
              key={t.id}
              type="button"
              className="fl-touch fl-segmented__option"
              aria-pressed={tab === t.id}
              onClick={() => {
                setTab(t.id);
                setMessage(null);
              }}
            >
              {t.label}
            </button>
          ))}
        </div>
        {message ? (
          <p role="status" className="fl-review-ok">
            {message}
          </p>
        ) : null}
        {tab === 'disputes' ? (
          disputeId ? (
            <OneDispute
              id={disputeId}
              onHistory={openHistory}
              onDone={(done) => {
                setDisputeId(null);
                setMessage(done);
              }}
            />
          ) : (
            <DisputesPanel
              now={new Date()}
              onOpen={(id) => {
                setMessage(null);
                setDisputeId(id);
              }}
            />
          )
        ) : tab === 'countersign' ? (
          <CountersignPanel
            onHistory={(visitId) => openHistory({ collection: 'visit', recordId: visitId })}
          />
        ) : (
          <HistoryPanel
            key={historyTarget ? `${historyTarget.collection}:${historyTarget.recordId}` : 'none'}
            target={historyTarget}
            onTarget={setHistoryTarget}
          />
        )}
      </div>
    </ReviewApiProvider>
  );
}

function SessionReviewDesk() {
  return <ReviewDesk api={useSessionReviewApi()} />;
}

export function ForSupervisorsOnly() {
  return (
    <div role="note" className="fl-review-panel">
      <h2>For supervisors</h2>
      <p>
        The Review desk is where supervisors resolve Disputes between tablets and countersign
        visits. Your role does not include it; ask a supervisor if a dispute or a countersignature
        is holding up your work.
      </p>
    </div>
  );
}

export default function ReviewDeskScreen() {
  const { user } = useSession();
  return (
    <IonPage>
      <IonHeader>
        <IonToolbar>
          <IonTitle>Review desk</IonTitle>
        </IonToolbar>
      </IonHeader>
      <IonContent className="ion-padding">
        <h1 className="fl-visually-hidden">Review desk</h1>
        {user?.role === 'supervisor' ? <SessionReviewDesk /> : <ForSupervisorsOnly />}
      </IonContent>
    </IonPage>
  );
}
