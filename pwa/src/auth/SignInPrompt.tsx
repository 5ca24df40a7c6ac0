// The visible ask when the server refused someone's session: their changes stay in the Outbox
// and are sent as soon as they sign in again.
import { useNavigate } from 'react-router-dom';
import { useAuthState } from './SessionProvider';
import './ui/identity.css';

export function SignInPrompt() {
  const { prompts, erasure } = useAuthState();
  const navigate = useNavigate();
  if (erasure || prompts.length === 0) return null;
  return (
    <div
      role="alert"
      className="fl-signin-prompt"
      style={{ padding: '12px 16px', background: 'var(--ion-color-warning-tint, #fff4d6)' }}
    >
      {prompts.map((prompt) => (
        <div
          key={prompt.userId}
          style={{ display: 'flex', flexWrap: 'wrap', alignItems: 'center', gap: 12 }}
        >
          <p style={{ margin: 0, flex: '1 1 20rem' }}>
            <strong>{prompt.name} needs to sign in again.</strong> {prompt.reason}{' '}
            {prompt.waitingChanges > 0
              ? `${prompt.waitingChanges} of their change${prompt.waitingChanges === 1 ? '' : 's'} ${prompt.waitingChanges === 1 ? 'is' : 'are'} kept in the Outbox and will be sent after they sign in.`
              : 'Nothing of theirs is waiting to be sent.'}
          </p>
          <button
            type="button"
            className="fl-id-button"
            onClick={() => navigate(`/signin?email=${encodeURIComponent(prompt.email)}`)}
          >
            Sign in as {prompt.name}
          </button>
        </div>
      ))}
    </div>
  );
}
