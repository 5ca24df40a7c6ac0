// People: invite someone with a role and sites, change a role or sites, deactivate (with a
// confirmation) or reactivate. Admins see no clinical content here.
import { zodResolver } from '@hookform/resolvers/zod';
import { ROLES, type AdminUser, type Role } from '@fuselight/shared';
import { useState } from 'react';
import { Controller, useForm } from 'react-hook-form';
import type { AdminSite } from '../../auth/identity-api';
import {
  Button,
  Confirmation,
  Notice,
  SelectField,
  TextField,
  describeError,
} from '../../auth/ui/controls';
import { IdentityPage } from '../../auth/ui/IdentityPage';
import { invitePersonSchema, type InvitePersonForm } from './admin-forms.schema';
import { SiteChecklist, siteNames } from './SiteChecklist';
import { useChangePerson, useInvitePerson, usePeople, useSites } from './useAdminQueries';

export const ROLE_WORDS: Record<Role, string> = {
  orthoptist: 'Orthoptist',
  outreach: 'Outreach clinician',
  supervisor: 'Supervisor',
  admin: 'Admin',
};

function InvitePerson({ sites }: { sites: AdminSite[] }) {
  const invite = useInvitePerson();
  const form = useForm<InvitePersonForm>({
    resolver: zodResolver(invitePersonSchema),
    defaultValues: { name: '', email: '', role: 'orthoptist', siteIds: [] },
  });
  const [invited, setInvited] = useState<{
    name: string;
    email: string;
    initialPassword: string;
  } | null>(null);
  const submit = form.handleSubmit(async (values) => {
    const answer = await invite.mutateAsync(values);
    setInvited({
      name: answer.user.name,
      email: answer.user.email,
      initialPassword: answer.initialPassword,
    });
    form.reset();
  });
  const { errors } = form.formState;
  return (
    <section className="fl-id-card" aria-labelledby="invite-heading">
      <h2 id="invite-heading">Invite a person</h2>
      <form
        noValidate
        aria-label="Invite a person"
        onSubmit={(e) => void submit(e).catch(() => undefined)}
      >
        <TextField label="Name" error={errors.name?.message} {...form.register('name')} />
        <TextField
          label="E-mail address"
          type="email"
          error={errors.email?.message}
          {...form.register('email')}
        />
        <SelectField label="Role" error={errors.role?.message} {...form.register('role')}>
          {ROLES.map((role) => (
            <option key={role} value={role}>
              {ROLE_WORDS[role]}
            </option>
          ))}
        </SelectField>
        <Controller
          control={form.control}
          name="siteIds"
          render={({ field, fieldState }) => (
            <SiteChecklist
              legend="Sites"
              sites={sites}
              value={field.value}
              onChange={field.onChange}
              error={fieldState.error?.message}
            />
          )}
        />
        {invite.isError ? <Notice tone="error">{describeError(invite.error)}</Notice> : null}
        {invited ? (
          <Notice>
            {invited.name} ({invited.email}) can now sign in with this one-time password, shown only
            now:{' '}
            <strong className="fl-id-code" data-testid="initial-password">
              {invited.initialPassword}
            </strong>
            . Give it to them in person; they choose their own at first sign-in.
          </Notice>
        ) : null}
        <Button type="submit" disabled={invite.isPending}>
          {invite.isPending ? 'Inviting…' : 'Invite'}
        </Button>
      </form>
    </section>
  );
}

function PersonCard({ person, sites }: { person: AdminUser; sites: AdminSite[] }) {
  const change = useChangePerson();
  const [editingSites, setEditingSites] = useState<string[] | null>(null);
  const [confirming, setConfirming] = useState(false);
  return (
    <li className="fl-id-card">
      <div className="fl-id-row" style={{ justifyContent: 'space-between' }}>
        <div>
          <strong>{person.name}</strong> <span className="fl-muted">{person.email}</span>
          <p className="fl-id-hint">
            {person.active ? 'Active' : 'Deactivated'} · {siteNames(sites, person.siteIds)}
          </p>
        </div>
        <SelectField
          label={`Role of ${person.name}`}
          value={person.role}
          disabled={change.isPending || !person.active}
          onChange={(e) =>
            change.mutate({ id: person.id, change: { role: e.target.value as Role } })
          }
        >
          {ROLES.map((role) => (
            <option key={role} value={role}>
              {ROLE_WORDS[role]}
            </option>
          ))}
        </SelectField>
      </div>
      {editingSites ? (
        <div>
          <SiteChecklist
            legend={`Sites of ${person.name}`}
            sites={sites}
            value={editingSites}
            onChange={setEditingSites}
          />
          <div className="fl-id-row">
            <Button
              onClick={() =>
                change.mutate(
                  { id: person.id, change: { siteIds: editingSites } },
                  { onSuccess: () => setEditingSites(null) },
                )
              }
            >
              Save sites
            </Button>
            <Button tone="quiet" onClick={() => setEditingSites(null)}>
              Cancel
            </Button>
          </div>
        </div>
      ) : (
        <div className="fl-id-row">
          <Button
            tone="quiet"
            onClick={() => setEditingSites(person.siteIds)}
            disabled={!person.active}
          >
            Change sites
          </Button>
          {person.active ? (
            <Button tone="danger" onClick={() => setConfirming(true)}>
              Deactivate
            </Button>
          ) : (
            <Button
              tone="quiet"
              onClick={() => change.mutate({ id: person.id, change: { active: true } })}
            >
              Reactivate
            </Button>
          )}
        </div>
      )}
      {confirming ? (
        <Confirmation
          title={`Deactivate ${person.name}?`}
          confirmLabel="Deactivate"
          busy={change.isPending}
          onCancel={() => setConfirming(false)}
          onConfirm={() =>
            change.mutate(
              { id: person.id, change: { active: false } },
              { onSuccess: () => setConfirming(false) },
            )
          }
        >
          They are signed out everywhere and can no longer sign in. What they charted stays in the
          records.
        </Confirmation>
      ) : null}
      {change.isError ? <Notice tone="error">{describeError(change.error)}</Notice> : null}
    </li>
  );
}

export default function PeopleScreen() {
  const people = usePeople();
  const sites = useSites();
  return (
    <IdentityPage title="People" wide>
      <InvitePerson sites={sites.data ?? []} />
      <section aria-labelledby="people-heading">
        <h2 id="people-heading">Everyone</h2>
        {people.isPending ? <p role="status">Loading people…</p> : null}
        {people.isError ? (
          <Notice tone="error">
            Could not load people: {describeError(people.error)}{' '}
            <Button tone="quiet" onClick={() => void people.refetch()}>
              Try again
            </Button>
          </Notice>
        ) : null}
        {people.data && people.data.length === 0 ? <p>Nobody has been invited yet.</p> : null}
        <ul style={{ listStyle: 'none', padding: 0 }} aria-label="People">
          {people.data?.map((person) => (
            <PersonCard key={person.id} person={person} sites={sites.data ?? []} />
          ))}
        </ul>
      </section>
    </IdentityPage>
  );
}
