import { CLINICAL_CAUTION } from '@fuselight/shared';
import { screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { afterEach, describe, expect, it } from 'vitest';
import {
  ORTHOPTIST,
  TEST_SITE_ID,
  editContext,
  freshRepositories,
  renderScreen,
} from '../../components/charting/test-support';
import { ChartingRepository } from '../../data/charting';
import ChartScreen from './ChartScreen';

type Repos = ReturnType<typeof freshRepositories>;
const opened: Repos[] = [];
afterEach(async () => {
  for (const repos of opened.splice(0)) {
    repos.db.close();
    await repos.db.delete();
  }
});

async function setupPatientWithVisits() {
  const repos = freshRepositories();
  opened.push(repos);
  const charting = new ChartingRepository(repos.records);
  const patientId = await repos.records.create(
    'patient',
    {
      siteId: TEST_SITE_ID,
      givenName: 'Wren',
      familyName: 'Altamira',
      dateOfBirth: '2016-04-09',
      clinicNumber: 'QX-4410',
    },
    editContext(),
  );
  const angles = [
    ['2025-01-10', -6],
    ['2026-02-11', -14],
    ['2025-07-20', -10],
  ] as const;
  for (const [date, objective] of angles) {
    const visitId = await repos.records.create(
      'visit',
      {
        siteId: TEST_SITE_ID,
        patientId,
        date,
        clinicianId: ORTHOPTIST.id,
        status: 'draft',
        reason: `Review ${date}`,
      },
      editContext(),
    );
    await charting.saveSection(
      visitId,
      'amblyoscopeAngles',
      { objectiveHorizontalDeg: objective, subjectiveHorizontalDeg: objective },
      editContext(),
    );
  }
  return { repos, patientId };
}

function renderChart(repos: Repos, patientId: string) {
  return renderScreen(<ChartScreen />, {
    repositories: repos,
    path: `/chart/${patientId}`,
    route: '/chart/:patientId',
  });
}

describe('the Chart screen', () => {
  it('lists the visits newest first', async () => {
    const { repos, patientId } = await setupPatientWithVisits();
    renderChart(repos, patientId);
    const list = await screen.findByRole('list', { name: 'Visits, newest first' });
    expect(
      within(list)
        .getAllByRole('listitem')
        .map((li) => within(li).getByText(/^Review/).textContent),
    ).toEqual(['Review 2026-02-11', 'Review 2025-07-20', 'Review 2025-01-10']);
  });

  it('draws the horizontal angle across visits in date order, with the caution and the norms note', async () => {
    const { repos, patientId } = await setupPatientWithVisits();
    renderChart(repos, patientId);
    const figure = await screen.findByRole(
      'figure',
      { name: 'Horizontal angle (°)' },
      { timeout: 5000 },
    );
    const cells = within(figure)
      .getAllByRole('row')
      .slice(1)
      .map((row) => within(row).getAllByRole('cell')[0]!.textContent);
    expect(cells).toEqual(['-6.0', '-10.0', '-14.0']);
    expect(figure.querySelector('figcaption')?.textContent).toBe(
      'No norms band: an angle is compared with the patient’s own earlier visits.',
    );
    expect(screen.getAllByRole('note').some((n) => n.textContent?.includes(CLINICAL_CAUTION))).toBe(
      true,
    );
  });

  it('saves an edited detail and refuses a date of birth in the future beside the field', async () => {
    const { repos, patientId } = await setupPatientWithVisits();
    const user = userEvent.setup();
    renderChart(repos, patientId);
    const form = await screen.findByRole('form', { name: 'Patient details' });
    const clinic = within(form).getByLabelText('Clinic number');
    await user.clear(clinic);
    await user.type(clinic, 'QX-5000');
    await user.click(within(form).getByRole('button', { name: 'Save details' }));
    await waitFor(async () =>
      expect((await repos.records.get('patient', patientId))!.fields.clinicNumber).toBe('QX-5000'),
    );

    const dob = within(form).getByLabelText('Date of birth');
    await user.clear(dob);
    await user.type(dob, '2999-01-01');
    await user.click(within(form).getByRole('button', { name: 'Save details' }));
    await waitFor(() => expect(dob.getAttribute('aria-invalid')).toBe('true'));
    expect(document.getElementById(dob.getAttribute('aria-describedby')!)?.textContent).toBe(
      'Date of birth cannot be in the future',
    );
    expect((await repos.records.get('patient', patientId))!.fields.dateOfBirth).toBe('2016-04-09');
  });

  it('says so when the patient is not on the tablet', async () => {
    const repos = freshRepositories();
    opened.push(repos);
    renderChart(repos, '0190c6a0-0000-7000-8000-0000000000ff');
    const back = await screen.findByRole('link', { name: 'Back to Today' });
    expect(back.getAttribute('href')).toBe('/today');
    expect(back.parentElement?.textContent).toBe(
      'This patient is not on this tablet. They may not have synced yet.Back to Today',
    );
  });
});
