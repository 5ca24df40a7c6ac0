import { screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { CLINICAL_CAUTION } from '@fuselight/shared';
import { afterEach, describe, expect, it } from 'vitest';
import {
  createPatientVisit,
  ORTHOPTIST,
  TEST_SITE_ID,
  editContext,
  freshRepositories,
  renderScreen,
} from '../components/charting/test-support';
import { finaliseLetter } from './letter-actions';
import { LetterPanel } from './LetterPanel';

type Repos = ReturnType<typeof freshRepositories>;
const opened: Repos[] = [];
afterEach(async () => {
  for (const repos of opened.splice(0)) {
    repos.db.close();
    await repos.db.delete();
  }
});

const CLINIC = { name: 'Brackenfold Orthoptic Clinic', address: '4 Tern Row\nBrackenfold' };

async function aVisit() {
  const repos = freshRepositories();
  opened.push(repos);
  const { patientId, visitId } = await createPatientVisit(repos, {
    patient: { referrer: { name: 'Dr Imogen Fairweather', email: 'fairweather@gp.example.test' } },
    visit: { status: 'signed' },
  });
  return { repos, patientId, visitId };
}

async function aLetter(
  repos: Repos,
  ids: { patientId: string; visitId: string },
  fields: Record<string, unknown> = {},
) {
  return repos.records.create(
    'letter',
    {
      siteId: TEST_SITE_ID,
      visitId: ids.visitId,
      patientId: ids.patientId,
      kind: 'referrer',
      status: 'draft',
      recipientName: 'Dr Imogen Fairweather',
      ...fields,
    } as Parameters<typeof repos.records.create<'letter'>>[1],
    editContext(),
  );
}

function renderPanel(repos: Repos, visitId: string) {
  return renderScreen(<LetterPanel visitId={visitId} clinic={CLINIC} />, { repositories: repos });
}

async function panel(): Promise<HTMLElement> {
  return screen.findByRole('region', { name: 'Letters' });
}

describe('the Letters panel', () => {
  it('drafts a letter to the referrer as a letter record with its Outbox entry, and opens it', async () => {
    const { repos, visitId, patientId } = await aVisit();
    const user = userEvent.setup();
    renderPanel(repos, visitId);
    await user.click(
      within(await panel()).getByRole('button', { name: 'New letter to the referrer' }),
    );

    await waitFor(async () =>
      expect(await repos.records.listByField('letter', 'visitId', visitId)).toHaveLength(1),
    );
    const [letter] = await repos.records.listByField('letter', 'visitId', visitId);
    expect(letter!.fields).toEqual({
      siteId: TEST_SITE_ID,
      visitId,
      patientId,
      kind: 'referrer',
      status: 'draft',
      recipientName: 'Dr Imogen Fairweather',
      recipientEmail: 'fairweather@gp.example.test',
    });
    const entries = await repos.outbox.listEntries();
    expect(entries.some((e) => e.collection === 'letter' && e.recordId === letter!.id)).toBe(true);
    const open = await screen.findByRole('region', { name: 'Open letter' });
    expect(within(open).getByRole('heading', { name: 'Letter to Dr Imogen Fairweather' }));
    expect(within(open).getByRole('status').textContent).toBe('Draft');
  });

  it('saves an edited paragraph of a draft to the letter record when the field is left', async () => {
    const { repos, visitId, patientId } = await aVisit();
    const letterId = await aLetter(repos, { visitId, patientId });
    const user = userEvent.setup();
    renderPanel(repos, visitId);
    await user.click(
      await within(await panel()).findByRole('button', {
        name: 'Open Letter to Dr Imogen Fairweather',
      }),
    );
    await user.click(screen.getByLabelText('Note under the plan'));
    await user.paste('  Review in three months with glasses on.  ');
    await user.tab();
    await waitFor(async () =>
      expect((await repos.records.get('letter', letterId))!.fields.planText).toBe(
        'Review in three months with glasses on.',
      ),
    );
  });

  it('keeps a final letter read-only: typing changes nothing and nothing is saved', async () => {
    const { repos, visitId, patientId } = await aVisit();
    const letterId = await aLetter(
      repos,
      { visitId, patientId },
      { opening: 'Dear Dr Fairweather,' },
    );
    await finaliseLetter(repos.records, letterId, editContext());
    const before = await repos.outbox.listEntries();
    const user = userEvent.setup();
    renderPanel(repos, visitId);
    await user.click(
      await within(await panel()).findByRole('button', {
        name: 'Open Letter to Dr Imogen Fairweather',
      }),
    );
    const opening = screen.getByLabelText('Opening') as HTMLTextAreaElement;
    expect(opening.readOnly).toBe(true);
    expect(opening.value).toBe('Dear Dr Fairweather,');
    await user.click(opening);
    await user.keyboard('Changed after finalising');
    await user.tab();
    expect(opening.value).toBe('Dear Dr Fairweather,');
    expect(screen.queryByRole('button', { name: 'Finalise' })).toBeNull();
    expect(screen.getByRole('region', { name: 'Open letter' }).textContent).toContain(
      'This letter is final and can no longer be changed; write a new letter instead.',
    );
    await new Promise((resolve) => setTimeout(resolve, 100));
    expect((await repos.records.get('letter', letterId))!.fields.opening).toBe(
      'Dear Dr Fairweather,',
    );
    expect(await repos.outbox.listEntries()).toHaveLength(before.length);
  });

  it('finalises a draft with who and when, after which its fields are read-only', async () => {
    const { repos, visitId, patientId } = await aVisit();
    const letterId = await aLetter(repos, { visitId, patientId });
    const user = userEvent.setup();
    renderPanel(repos, visitId);
    await user.click(
      await within(await panel()).findByRole('button', {
        name: 'Open Letter to Dr Imogen Fairweather',
      }),
    );
    await user.click(screen.getByRole('button', { name: 'Finalise' }));
    await waitFor(async () =>
      expect((await repos.records.get('letter', letterId))!.fields).toMatchObject({
        status: 'final',
        finalisedBy: ORTHOPTIST.id,
        finalisedAt: expect.stringMatching(/^\d{4}-\d\d-\d\dT/),
      }),
    );
    await waitFor(() =>
      expect((screen.getByLabelText('Closing') as HTMLTextAreaElement).readOnly).toBe(true),
    );
    expect(
      within(screen.getByRole('region', { name: 'Open letter' })).getByRole('status').textContent,
    ).toBe('Final, not sent');
  });

  it('asks for a final letter to be sent with a copy to the patient, setting sendRequestedAt', async () => {
    const { repos, visitId, patientId } = await aVisit();
    const letterId = await aLetter(repos, { visitId, patientId });
    await finaliseLetter(repos.records, letterId, editContext());
    const user = userEvent.setup();
    renderPanel(repos, visitId);
    await user.click(
      await within(await panel()).findByRole('button', {
        name: 'Open Letter to Dr Imogen Fairweather',
      }),
    );
    await user.click(screen.getByLabelText('Copy to the patient'));
    const send = screen.getByRole('button', { name: 'E-mail to the referrer' });
    await user.click(send);
    await waitFor(async () =>
      expect((await repos.records.get('letter', letterId))!.fields).toMatchObject({
        deliveryState: 'queued',
        sendRequestedAt: expect.stringMatching(/^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d\.\d{3}Z$/),
        copyToPatient: true,
      }),
    );
    await waitFor(() => expect(send).toHaveProperty('disabled', true));
    expect(
      within(screen.getByRole('region', { name: 'Open letter' })).getByRole('status').textContent,
    ).toBe('Queued to send');
  });

  it('offers no patient copy on a handout, which goes to the patient', async () => {
    const { repos, visitId, patientId } = await aVisit();
    const letterId = await aLetter(
      repos,
      { visitId, patientId },
      { kind: 'handout', recipientName: null },
    );
    await finaliseLetter(repos.records, letterId, editContext());
    const user = userEvent.setup();
    renderPanel(repos, visitId);
    await user.click(
      await within(await panel()).findByRole('button', { name: 'Open Exercise handout' }),
    );
    expect(screen.queryByLabelText('Copy to the patient')).toBeNull();
    await user.click(screen.getByRole('button', { name: 'E-mail to the patient' }));
    await waitFor(async () =>
      expect((await repos.records.get('letter', letterId))!.fields.deliveryState).toBe('queued'),
    );
    expect((await repos.records.get('letter', letterId))!.fields.copyToPatient).toBeUndefined();
  });

  it('says each letter’s delivery state in words', async () => {
    const { repos, visitId, patientId } = await aVisit();
    const final = {
      status: 'final',
      finalisedBy: ORTHOPTIST.id,
      finalisedAt: '2026-11-30T15:00:00.000Z',
    };
    await aLetter(repos, { visitId, patientId }, { subject: 'Draft one' });
    await aLetter(repos, { visitId, patientId }, { ...final, subject: 'Final one' });
    await aLetter(
      repos,
      { visitId, patientId },
      { ...final, subject: 'Sent one', deliveryState: 'sent', sentAt: '2026-12-02T09:30:00.000Z' },
    );
    await aLetter(
      repos,
      { visitId, patientId },
      {
        ...final,
        subject: 'Failed one',
        deliveryState: 'failed',
        deliveryError: "the patient's record has no referrer e-mail address",
      },
    );
    renderPanel(repos, visitId);
    const list = await within(await panel()).findByRole('list', { name: 'Letters of this visit' });
    const rowOf = (subject: string) => within(list).getByText(subject).closest('li')!;
    await waitFor(() => expect(within(list).getAllByRole('listitem')).toHaveLength(4));
    const stateOf = (subject: string) =>
      rowOf(subject).querySelector('.flc-row__main')?.lastElementChild?.textContent;
    expect(stateOf('Draft one')).toBe('Draft');
    expect(stateOf('Final one')).toBe('Final, not sent');
    expect(stateOf('Sent one')).toBe('Sent 2026-12-02');
    expect(stateOf('Failed one')).toBe(
      "Not sent: the patient's record has no referrer e-mail address",
    );
  });

  it('shows the letterhead it was given, the caution, and an empty list in words', async () => {
    const { repos, visitId } = await aVisit();
    renderPanel(repos, visitId);
    const letters = await panel();
    expect([...letters.querySelectorAll('p.fl-muted')].map((p) => p.textContent)).toEqual([
      CLINICAL_CAUTION,
      'Letterhead: Brackenfold Orthoptic Clinic · 4 Tern Row · Brackenfold',
      'No letters for this visit yet.',
    ]);
    expect(within(letters).queryByRole('list')).toBeNull();
  });
});

describe('the Letters panel without its visit', () => {
  it('shows nothing until the visit is on the tablet', async () => {
    const repos = freshRepositories();
    opened.push(repos);
    const { container } = renderScreen(
      <LetterPanel visitId="0190c6a0-0000-7000-8000-0000000000ff" clinic={CLINIC} />,
      { repositories: repos },
    );
    await new Promise((resolve) => setTimeout(resolve, 50));
    expect(within(container).queryByRole('region', { name: 'Letters' })).toBeNull();
  });
});
