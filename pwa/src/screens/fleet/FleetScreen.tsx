// The Fleet: register a tablet and show its one-time enrolment code as a QR code, see each
// tablet's last contact, app version, Outbox size and how its data key is protected (with the
// risk of a PIN-only tablet in plain words), and revoke or retire it.
import { zodResolver } from '@hookform/resolvers/zod';
import type { FleetDevice, KeyProtectionKind } from '@fuselight/shared';
import { QRCodeSVG } from 'qrcode.react';
import { useState } from 'react';
import { Controller, useForm } from 'react-hook-form';
import type { RegisteredDevice } from '../../auth/identity-api';
import { Button, Confirmation, Notice, TextField, describeError } from '../../auth/ui/controls';
import { IdentityPage } from '../../auth/ui/IdentityPage';
import './fleet.css';
import { registerTabletSchema, type RegisterTabletForm } from '../admin/admin-forms.schema';
import { SiteChecklist, siteNames } from '../admin/SiteChecklist';
import {
  useChangeTabletSites,
  useFleet,
  useRegisterTablet,
  useSites,
  useTabletAction,
} from '../admin/useAdminQueries';

const STATE_WORDS: Record<FleetDevice['state'], string> = {
  pending: 'Waiting to be enrolled',
  active: 'In use',
  retired: 'Retired: sending its last changes, then erasing',
  revoked: 'Revoked',
};

/** How a tablet's data key is protected (docs/threat-model.md), in words for the admin. */
export const KEY_PROTECTION_WORDS: Record<KeyProtectionKind, string> = {
  'pin-only': 'PIN only',
  passphrase: 'Passphrase',
  hardware: 'Hardware-backed',
  'server-only': 'Online sign-in only',
  unprotected: 'Not protected yet',
};

export function keyProtectionWords(kind: KeyProtectionKind | null | undefined): string {
  return kind ? KEY_PROTECTION_WORDS[kind] : 'Not reported';
}

/** The risk of PIN-only tablets, as docs/threat-model.md gives it. */
export const PIN_ONLY_RISK =
  'A PIN alone protects these tablets’ data only while the tablet stays out of an attacker’s hands. Someone who copies the browser profile can try every PIN offline, where the wrong-PIN limit does not count: a high-end graphics card tries every 6-digit PIN in about 3 minutes. A tablet whose screen lock has security hardware makes each PIN need it too (hardware-backed); elsewhere, the clinic setting for tablets without it can ask for a passphrase that cannot be guessed. Revoke a lost tablet at once.';

function when(iso: string | null | undefined): string {
  return iso ? new Date(iso).toLocaleString() : 'never';
}

function RegisterTablet() {
  const sites = useSites();
  const register = useRegisterTablet();
  const [issued, setIssued] = useState<(RegisteredDevice & { label: string }) | null>(null);
  const form = useForm<RegisterTabletForm>({
    resolver: zodResolver(registerTabletSchema),
    defaultValues: { label: '', siteIds: [] },
  });
  const submit = form.handleSubmit(async (values) => {
    const answer = await register.mutateAsync(values);
    setIssued({ ...answer, label: values.label });
    form.reset();
  });

  return (
    <section aria-labelledby="register-heading" className="fl-id-card">
      <h2 id="register-heading">Register a tablet</h2>
      <form
        noValidate
        aria-label="Register a tablet"
        onSubmit={(e) => void submit(e).catch(() => undefined)}
      >
        <TextField
          label="Tablet name"
          error={form.formState.errors.label?.message}
          {...form.register('label')}
        />
        {sites.isPending ? <p role="status">Loading sites…</p> : null}
        {sites.isError ? (
          <Notice tone="error">Could not load the sites: {describeError(sites.error)}</Notice>
        ) : null}
        <Controller
          control={form.control}
          name="siteIds"
          render={({ field, fieldState }) => (
            <SiteChecklist
              legend="Sites it serves"
              sites={sites.data ?? []}
              value={field.value}
              onChange={field.onChange}
              error={fieldState.error?.message}
            />
          )}
        />
        {register.isError ? <Notice tone="error">{describeError(register.error)}</Notice> : null}
        <Button type="submit" disabled={register.isPending}>
          {register.isPending ? 'Registering…' : 'Register tablet'}
        </Button>
      </form>
      {issued ? (
        <div aria-live="polite" style={{ marginTop: 16 }}>
          <h3>Enrolment code for {issued.label}</h3>
          <p>
            On the tablet, open Fuselight and choose &ldquo;Enrol this tablet&rdquo;. Scan this QR
            code or type the code. It works once, until{' '}
            {new Date(issued.expiresAt).toLocaleString()}.
          </p>
          <div className="fl-id-row" style={{ alignItems: 'flex-start' }}>
            <div className="fl-id-qr">
              <QRCodeSVG
                value={issued.qrPayload}
                size={224}
                level="M"
                title={`QR code for enrolling ${issued.label}`}
              />
            </div>
            <p className="fl-id-code" data-testid="enrolment-code" aria-label="Enrolment code">
              {issued.enrolmentCode}
            </p>
          </div>
          <Button tone="quiet" onClick={() => setIssued(null)}>
            Done
          </Button>
        </div>
      ) : null}
    </section>
  );
}

/**
 * The sites a tablet serves, changed in a row beneath it. Taking a site off removes its records
 * from the tablet at its next contact (unsent edits are kept until they reach the server), so the
 * admin is told so before saving.
 */
function ChangeTabletSites(props: { tablet: FleetDevice; onDone: () => void }) {
  const sites = useSites();
  const change = useChangeTabletSites();
  const [siteIds, setSiteIds] = useState<string[]>(props.tablet.siteIds);
  const [error, setError] = useState<string | undefined>(undefined);
  const removed = props.tablet.siteIds.filter((id) => !siteIds.includes(id));
  const save = () => {
    if (siteIds.length === 0) {
      setError('Sites: choose at least one site this tablet serves');
      return;
    }
    change.mutate({ id: props.tablet.id, siteIds }, { onSuccess: props.onDone });
  };
  return (
    <Confirmation
      title={`Sites of ${props.tablet.label}`}
      confirmLabel="Save sites"
      tone={removed.length > 0 ? 'danger' : 'primary'}
      busy={change.isPending}
      onCancel={props.onDone}
      onConfirm={save}
    >
      <SiteChecklist
        legend="Sites this tablet serves"
        sites={sites.data ?? []}
        value={siteIds}
        onChange={(next) => {
          setSiteIds(next);
          setError(undefined);
        }}
        error={error}
      />
      {removed.length > 0 ? (
        <p>
          {`Records of ${siteNames(sites.data, removed)} will be removed from this tablet the next time it reaches the server. Edits it has not sent yet are kept until they reach the server.`}
        </p>
      ) : null}
      {change.isError ? <Notice tone="error">{describeError(change.error)}</Notice> : null}
    </Confirmation>
  );
}

function TabletRow({ tablet, sitesText }: { tablet: FleetDevice; sitesText: string }) {
  const action = useTabletAction();
  const [confirming, setConfirming] = useState<'revoke' | 'retire' | 'sites' | null>(null);
  const ended = tablet.state === 'revoked' || tablet.state === 'retired';
  // The buttons stay on one line; a confirmation or a refusal opens in a row of its own beneath
  // the tablet's, across the table, so the Actions column never grows and pushes rows apart.
  const followUp = confirming !== null || action.isError;
  return (
    <>
      <tr className={followUp ? 'fl-fleet-row--open' : undefined}>
        <th scope="row">{tablet.label}</th>
        <td>{STATE_WORDS[tablet.state]}</td>
        <td>
          {sitesText}
          {ended ? null : (
            <>
              {' '}
              <Button
                tone="quiet"
                onClick={() => setConfirming('sites')}
                aria-label={`Change the sites of ${tablet.label}`}
              >
                Change
              </Button>
            </>
          )}
        </td>
        <td>{when(tablet.lastSeenAt)}</td>
        <td>{tablet.appVersion ?? 'not reported'}</td>
        <td>{tablet.outboxSize ?? 'not reported'}</td>
        <td>
          {keyProtectionWords(tablet.keyProtection)}
          {tablet.keyProtection === 'pin-only' ? (
            <span className="fl-muted"> (can be opened offline if copied)</span>
          ) : null}
          {tablet.keyProtection === 'hardware' ? (
            <span className="fl-muted"> (each PIN needs this tablet’s security hardware)</span>
          ) : null}
          {tablet.keyProtection === 'unprotected' ? (
            <span className="fl-muted"> (stored unencrypted until someone unlocks it)</span>
          ) : null}
        </td>
        <td className="fl-fleet-actions">
          {ended ? null : (
            <div className="fl-fleet-actions__buttons">
              <Button
                tone="quiet"
                onClick={() => setConfirming('retire')}
                aria-label={`Retire ${tablet.label}`}
              >
                Retire
              </Button>
              <Button
                tone="danger"
                onClick={() => setConfirming('revoke')}
                aria-label={`Revoke ${tablet.label}`}
              >
                Revoke
              </Button>
            </div>
          )}
        </td>
      </tr>
      {followUp ? (
        <tr className="fl-fleet-followup">
          <td colSpan={FLEET_COLUMNS.length}>
            {confirming === 'sites' ? (
              <ChangeTabletSites tablet={tablet} onDone={() => setConfirming(null)} />
            ) : confirming ? (
              <Confirmation
                title={
                  confirming === 'revoke' ? `Revoke ${tablet.label}?` : `Retire ${tablet.label}?`
                }
                confirmLabel={confirming === 'revoke' ? 'Revoke now' : 'Retire'}
                busy={action.isPending}
                onCancel={() => setConfirming(null)}
                onConfirm={() =>
                  action.mutate(
                    { id: tablet.id, action: confirming },
                    { onSuccess: () => setConfirming(null) },
                  )
                }
              >
                {confirming === 'revoke'
                  ? `The tablet is refused at once and erases everything on it the next time it reaches the server. ${
                      tablet.outboxSize
                        ? `${tablet.outboxSize} changes it has not sent will be lost.`
                        : ''
                    } Use this for a lost or stolen tablet.`
                  : 'The tablet sends the changes it still holds, then erases itself. Use this for a tablet leaving service.'}
              </Confirmation>
            ) : null}
            {action.isError ? <Notice tone="error">{describeError(action.error)}</Notice> : null}
          </td>
        </tr>
      ) : null}
    </>
  );
}

const FLEET_COLUMNS = [
  'Tablet',
  'State',
  'Sites',
  'Last contact',
  'App version',
  'Outbox',
  'Data key',
  'Actions',
] as const;

/** Names the PIN-only tablets still in use and says their risk plainly. */
function PinOnlyRisk({ tablets }: { tablets: readonly FleetDevice[] }) {
  const pinOnly = tablets.filter(
    (t) => t.keyProtection === 'pin-only' && t.state !== 'revoked' && t.state !== 'retired',
  );
  if (pinOnly.length === 0) return null;
  return (
    <Notice tone="warning">
      <strong>
        {pinOnly.length === 1
          ? `${pinOnly[0]!.label} is protected by a PIN only.`
          : `${pinOnly.length} tablets are protected by a PIN only: ${pinOnly.map((t) => t.label).join(', ')}.`}
      </strong>{' '}
      {PIN_ONLY_RISK}
    </Notice>
  );
}

export default function FleetScreen() {
  const fleet = useFleet();
  const sites = useSites();
  return (
    <IdentityPage title="Fleet" wide>
      <RegisterTablet />
      <section aria-labelledby="fleet-heading">
        <h2 id="fleet-heading">Tablets</h2>
        {fleet.isPending ? <p role="status">Loading the Fleet…</p> : null}
        {fleet.isError ? (
          <Notice tone="error">
            Could not load the Fleet: {describeError(fleet.error)}{' '}
            <Button tone="quiet" onClick={() => void fleet.refetch()}>
              Try again
            </Button>
          </Notice>
        ) : null}
        {fleet.data && fleet.data.length === 0 ? <p>No tablets are registered yet.</p> : null}
        {fleet.data ? <PinOnlyRisk tablets={fleet.data} /> : null}
        {fleet.data && fleet.data.length > 0 ? (
          <div className="fl-fleet-scroll">
            <table className="fl-id-table fl-fleet-table">
              <thead>
                <tr>
                  {FLEET_COLUMNS.map((column) => (
                    <th key={column} scope="col">
                      {column}
                    </th>
                  ))}
                </tr>
              </thead>
              <tbody>
                {fleet.data.map((tablet) => (
                  <TabletRow
                    key={tablet.id}
                    tablet={tablet}
                    sitesText={siteNames(sites.data, tablet.siteIds)}
                  />
                ))}
              </tbody>
            </table>
          </div>
        ) : null}
      </section>
    </IdentityPage>
  );
}
