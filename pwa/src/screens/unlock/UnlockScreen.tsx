// The person switcher on a shared tablet: everyone who signed in here, unlocked with their PIN
// (offline too, within the clinic's window) or by signing in again.
import { useState, type FormEvent } from 'react';
import { Link, useLocation, useNavigate } from 'react-router-dom';
import type { KnownPerson } from '../../auth/session-store';
import { useAuthState } from '../../auth/SessionProvider';
import { siteLabel } from '../../auth/site-names';
import { useAuthActions } from '../../auth/useAuthActions';
import { Button, Notice, TextField } from '../../auth/ui/controls';
import { IdentityPage } from '../../auth/ui/IdentityPage';
import { PIN_RULE, pinSchema } from '../../auth/pin-schemas';

function whyNoPin(person: KnownPerson): string {
  if (person.signInRequired) return person.signInRequired.reason;
  if (!person.hasPin) return 'No PIN set on this tablet.';
  if (person.pinAttemptsLeft === 0) return 'Locked after too many wrong PINs.';
  return 'The offline window has closed.';
}

export default function UnlockScreen() {
  const { people, loaded, sites } = useAuthState();
  const actions = useAuthActions();
  const navigate = useNavigate();
  // Locked while on a screen (idle, or a reload): unlocking goes back to it.
  const from = (useLocation().state as { from?: string } | null)?.from;
  const [chosen, setChosen] = useState<string | null>(null);
  const [pin, setPin] = useState('');
  const [message, setMessage] = useState<string | null>(null);
  // The screen lock's hardware did not answer: the way in is an online sign-in.
  const [hardwareFailed, setHardwareFailed] = useState(false);
  const [busy, setBusy] = useState(false);
  const person = people.find((p) => p.user.id === chosen) ?? null;

  const submit = async (event: FormEvent) => {
    event.preventDefault();
    if (!person) return;
    if (!pinSchema.safeParse(pin).success) {
      setMessage(PIN_RULE);
      return;
    }
    setBusy(true);
    setHardwareFailed(false);
    const result = await actions.unlock(person.user.id, pin);
    setBusy(false);
    setPin('');
    if (result.ok)
      navigate(from?.startsWith('/') && !from.startsWith('/unlock') ? from : '/', {
        replace: true,
      });
    else {
      setMessage(result.message);
      setHardwareFailed(result.reason === 'hardware');
    }
  };

  if (!loaded)
    return (
      <IdentityPage title="Who is using this tablet?">
        <p role="status">Loading…</p>
      </IdentityPage>
    );

  return (
    <IdentityPage title="Who is using this tablet?">
      {people.length === 0 ? <p>Nobody has signed in on this tablet yet.</p> : null}
      <ul aria-label="People on this tablet" style={{ listStyle: 'none', padding: 0 }}>
        {people.map((p) => (
          <li key={p.user.id} className="fl-id-card">
            <div className="fl-id-row" style={{ justifyContent: 'space-between' }}>
              <div>
                <strong>{p.user.name}</strong>
                {p.user.siteIds.length > 0 ? (
                  <p className="fl-id-hint">
                    {p.user.siteIds.map((id, index) => siteLabel(sites, id, index)).join(', ')}
                  </p>
                ) : null}
                <p className="fl-id-hint">
                  {p.canUnlockWithPin ? `${p.pinAttemptsLeft} PIN attempts left` : whyNoPin(p)}
                </p>
              </div>
              {p.canUnlockWithPin ? (
                <Button
                  onClick={() => {
                    setChosen(p.user.id);
                    setMessage(null);
                    setHardwareFailed(false);
                  }}
                  aria-pressed={chosen === p.user.id}
                >
                  Unlock as {p.user.name}
                </Button>
              ) : (
                <Link
                  className="fl-id-button"
                  data-tone="quiet"
                  to={`/signin?email=${encodeURIComponent(p.user.email)}`}
                >
                  Sign in as {p.user.name}
                </Link>
              )}
            </div>
            {person && person.user.id === p.user.id ? (
              <form
                noValidate
                aria-label={`Unlock ${p.user.name}`}
                onSubmit={(e) => void submit(e)}
                style={{ marginTop: 12 }}
              >
                <TextField
                  label={`PIN for ${p.user.name}`}
                  type="password"
                  inputMode="numeric"
                  autoComplete="off"
                  autoFocus
                  value={pin}
                  onChange={(e) => setPin(e.target.value)}
                  error={message ?? undefined}
                />
                <div className="fl-id-row">
                  <Button type="submit" disabled={busy}>
                    {busy ? 'Checking…' : 'Unlock'}
                  </Button>
                  {hardwareFailed ? (
                    <Link
                      className="fl-id-button"
                      to={`/signin?email=${encodeURIComponent(p.user.email)}`}
                    >
                      Sign in with your password
                    </Link>
                  ) : null}
                </div>
              </form>
            ) : null}
          </li>
        ))}
      </ul>
      {chosen && !person ? <Notice>That person is no longer on this tablet.</Notice> : null}
      <Link className="fl-id-button" data-tone="quiet" to="/signin">
        Someone else: sign in
      </Link>
    </IdentityPage>
  );
}
