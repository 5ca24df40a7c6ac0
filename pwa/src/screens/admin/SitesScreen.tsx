// Sites: the clinic's locations and outreach places that people and tablets belong to, and the
// clinic's settings that every tablet follows.
import { zodResolver } from '@hookform/resolvers/zod';
import { PASSPHRASE_CHARACTER_CLASSES, type ClinicSettings } from '@fuselight/shared';
import { useState } from 'react';
import { useForm, useWatch } from 'react-hook-form';
import { CHARACTER_CLASS_WORDS } from '../../auth/secret-policy';
import type { AdminSite } from '../../auth/identity-api';
import { Button, Notice, SelectField, TextField, describeError } from '../../auth/ui/controls';
import { IdentityPage } from '../../auth/ui/IdentityPage';
import {
  PASSPHRASE_POLICY_MIN_LENGTH,
  clinicSettingsForm,
  clinicSettingsFormSchema,
  clinicSettingsFromForm,
  siteFormSchema,
  type ClinicSettingsForm as ClinicSettingsValues,
  type SiteForm,
} from './admin-forms.schema';
import {
  useAddSite,
  useChangeClinicSettings,
  useChangeSite,
  useClinicSettings,
  useSites,
} from './useAdminQueries';

/**
 * The clinic's settings: how long edits may wait unsynced on a tablet before it warns, and what a
 * secret must be on a tablet without security hardware for its PIN (docs/threat-model.md).
 */
export function ClinicSettingsForm({ settings }: { settings: ClinicSettings }) {
  const change = useChangeClinicSettings();
  const form = useForm<ClinicSettingsValues>({
    resolver: zodResolver(clinicSettingsFormSchema),
    defaultValues: clinicSettingsForm(settings),
  });
  const submit = form.handleSubmit(async (values) => {
    await change.mutateAsync(clinicSettingsFromForm(values));
    form.reset(values);
  });
  const { errors } = form.formState;
  const passphrase = useWatch({ control: form.control, name: 'unlockRule' }) === 'passphrase';
  return (
    <form
      noValidate
      aria-label="Clinic settings"
      onSubmit={(e) => void submit(e).catch(() => undefined)}
    >
      <TextField
        label="Warn when edits wait unsynced longer than (hours)"
        hint="Every tablet warns on every screen once its oldest unsent edit is older than this; a browser may clear a tablet's storage. 24 hours unless changed."
        type="number"
        inputMode="numeric"
        min={1}
        max={720}
        error={form.formState.errors.unsyncedWarningHours?.message}
        {...form.register('unsyncedWarningHours', { valueAsNumber: true })}
      />
      <SelectField
        label="Tablets without security hardware for the PIN"
        hint="Where a tablet's screen lock has a platform authenticator, each PIN needs it too and cannot be tried offline on a copy. Elsewhere a PIN alone can be: ask for a passphrase, or accept PIN only (the Fleet screen states the risk)."
        error={errors.unlockRule?.message}
        {...form.register('unlockRule')}
      >
        <option value="pin-only">Accept a PIN only</option>
        <option value="passphrase">Ask for a passphrase</option>
      </SelectField>
      {passphrase ? (
        <>
          <TextField
            label="Passphrase at least (characters)"
            type="number"
            inputMode="numeric"
            min={PASSPHRASE_POLICY_MIN_LENGTH}
            max={128}
            error={errors.passphraseMinLength?.message}
            {...form.register('passphraseMinLength', { valueAsNumber: true })}
          />
          <fieldset className="fl-id-field fl-id-checks" style={{ border: 0, padding: 0 }}>
            <legend style={{ fontWeight: 700 }}>The passphrase must contain</legend>
            {PASSPHRASE_CHARACTER_CLASSES.map((kind) => (
              <label key={kind}>
                <input type="checkbox" value={kind} {...form.register('requiredClasses')} />
                {CHARACTER_CLASS_WORDS[kind]}
              </label>
            ))}
            {errors.requiredClasses?.message ? (
              <p className="fl-id-error" role="alert">
                {errors.requiredClasses.message}
              </p>
            ) : null}
          </fieldset>
        </>
      ) : null}
      {change.isError ? <Notice tone="error">{describeError(change.error)}</Notice> : null}
      {change.isSuccess && !form.formState.isDirty ? (
        <Notice tone="info">Saved. Tablets follow it at their next check with the server.</Notice>
      ) : null}
      <Button type="submit" disabled={change.isPending}>
        {change.isPending ? 'Saving…' : 'Save settings'}
      </Button>
    </form>
  );
}

function ClinicSettingsCard() {
  const settings = useClinicSettings();
  return (
    <section className="fl-id-card" aria-labelledby="clinic-settings-heading">
      <h2 id="clinic-settings-heading">Clinic settings</h2>
      {settings.isPending ? <p role="status">Loading the clinic’s settings…</p> : null}
      {settings.isError ? (
        <Notice tone="error">
          Could not load the clinic’s settings: {describeError(settings.error)}
        </Notice>
      ) : null}
      {settings.data ? <ClinicSettingsForm settings={settings.data} /> : null}
    </section>
  );
}

function SiteFields({ form }: { form: ReturnType<typeof useForm<SiteForm>> }) {
  const { errors } = form.formState;
  return (
    <>
      <TextField label="Site name" error={errors.name?.message} {...form.register('name')} />
      <SelectField label="Kind" error={errors.kind?.message} {...form.register('kind')}>
        <option value="clinic">Clinic</option>
        <option value="outreach">Outreach (school, rural clinic)</option>
      </SelectField>
      <TextField label="Address" error={errors.address?.message} {...form.register('address')} />
      <TextField
        label="Time zone"
        hint="IANA name, e.g. Europe/London"
        error={errors.timeZone?.message}
        {...form.register('timeZone')}
      />
    </>
  );
}

function EditSite({ site, onDone }: { site: AdminSite; onDone: () => void }) {
  const changeSite = useChangeSite();
  const form = useForm<SiteForm>({
    resolver: zodResolver(siteFormSchema),
    defaultValues: {
      name: site.name,
      kind: site.kind,
      address: site.address ?? '',
      timeZone: site.timeZone,
    },
  });
  const submit = form.handleSubmit(async (values) => {
    await changeSite.mutateAsync({
      id: site.id,
      change: { ...values, address: values.address || null },
    });
    onDone();
  });
  return (
    <form
      noValidate
      aria-label={`Edit ${site.name}`}
      onSubmit={(e) => void submit(e).catch(() => undefined)}
    >
      <SiteFields form={form} />
      {changeSite.isError ? <Notice tone="error">{describeError(changeSite.error)}</Notice> : null}
      <div className="fl-id-row">
        <Button type="submit" disabled={changeSite.isPending}>
          Save
        </Button>
        <Button tone="quiet" onClick={onDone}>
          Cancel
        </Button>
      </div>
    </form>
  );
}

export default function SitesScreen() {
  const sites = useSites();
  const addSite = useAddSite();
  const [editing, setEditing] = useState<string | null>(null);
  const form = useForm<SiteForm>({
    resolver: zodResolver(siteFormSchema),
    defaultValues: { name: '', kind: 'clinic', address: '', timeZone: 'Europe/London' },
  });
  const submit = form.handleSubmit(async (values) => {
    await addSite.mutateAsync({ ...values, address: values.address || null });
    form.reset();
  });
  return (
    <IdentityPage title="Sites" wide>
      <section className="fl-id-card" aria-labelledby="add-site-heading">
        <h2 id="add-site-heading">Add a site</h2>
        <form
          noValidate
          aria-label="Add a site"
          onSubmit={(e) => void submit(e).catch(() => undefined)}
        >
          <SiteFields form={form} />
          {addSite.isError ? <Notice tone="error">{describeError(addSite.error)}</Notice> : null}
          <Button type="submit" disabled={addSite.isPending}>
            {addSite.isPending ? 'Adding…' : 'Add site'}
          </Button>
        </form>
      </section>
      <ClinicSettingsCard />
      <section aria-labelledby="sites-heading">
        <h2 id="sites-heading">Sites</h2>
        {sites.isPending ? <p role="status">Loading sites…</p> : null}
        {sites.isError ? (
          <Notice tone="error">Could not load sites: {describeError(sites.error)}</Notice>
        ) : null}
        {sites.data && sites.data.length === 0 ? <p>No sites yet.</p> : null}
        <ul style={{ listStyle: 'none', padding: 0 }} aria-label="Sites">
          {sites.data?.map((site) => (
            <li key={site.id} className="fl-id-card">
              {editing === site.id ? (
                <EditSite site={site} onDone={() => setEditing(null)} />
              ) : (
                <div className="fl-id-row" style={{ justifyContent: 'space-between' }}>
                  <div>
                    <strong>{site.name}</strong>
                    <p className="fl-id-hint">
                      {site.kind === 'outreach' ? 'Outreach' : 'Clinic'} ·{' '}
                      {site.address ?? 'no address'} · {site.timeZone}
                    </p>
                  </div>
                  <Button
                    tone="quiet"
                    onClick={() => setEditing(site.id)}
                    aria-label={`Edit ${site.name}`}
                  >
                    Edit
                  </Button>
                </div>
              )}
            </li>
          ))}
        </ul>
      </section>
    </IdentityPage>
  );
}
