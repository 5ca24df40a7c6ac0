import { readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { afterEach, describe, expect, it } from 'vitest';
import {
  TEST_SITE_ID,
  editContext,
  freshRepositories,
  renderScreen,
} from '../../components/charting/test-support';
import { localDate } from '../../data/charting';
import TodayScreen from './TodayScreen';

const opened: ReturnType<typeof freshRepositories>[] = [];
afterEach(async () => {
  for (const repos of opened.splice(0)) {
    repos.db.close();
    await repos.db.delete();
  }
});

function setup() {
  const repos = freshRepositories();
  opened.push(repos);
  return repos;
}

async function addPatient(
  repos: ReturnType<typeof freshRepositories>,
  fields: { givenName: string; familyName: string; dateOfBirth: string; clinicNumber: string },
) {
  return repos.records.create('patient', { siteId: TEST_SITE_ID, ...fields }, editContext());
}

// Two invented patients most of the search tests look for.
const WREN = {
  givenName: 'Wren',
  familyName: 'Altamira',
  dateOfBirth: '2016-04-09',
  clinicNumber: 'QX-4410',
};
const OSWIN = {
  givenName: 'Oswin',
  familyName: 'Belgrave',
  dateOfBirth: '1979-11-30',
  clinicNumber: 'QX-9921',
};

/** The search panel's status line. */
const status = () =>
  within(screen.getByRole('region', { name: 'Find a patient' })).getByRole('status').textContent;

/** The names the search lists, in order (none when it lists nothing). */
const resultNames = () =>
  [
    ...(screen
      .queryByRole('list', { name: 'Search results' })
      ?.querySelectorAll('.flc-row__title') ?? []),
  ].map((title) => title.textContent);

/** A form field's invalid state and the message it is described by. */
const fieldMessage = (label: string) => {
  const input = screen.getByLabelText(label);
  const messageId = input.getAttribute('aria-describedby');
  return [
    input.getAttribute('aria-invalid'),
    messageId && document.getElementById(messageId)?.textContent,
  ];
};

describe('the Today screen', () => {
  it('says plainly when nothing is booked today', async () => {
    const repos = setup();
    renderScreen(<TodayScreen />, { repositories: repos });
    await waitFor(() =>
      expect(document.querySelector('.flc-state')?.textContent).toBe(
        'No visits booked or seen today at this site yet.Find a patient or add a new one, then start a visit.',
      ),
    );
    expect(screen.queryByRole('list', { name: 'Today’s visits' })).toBeNull();
  });

  it('finds patients by the start of a name, a clinic number and a date of birth', async () => {
    const repos = setup();
    await addPatient(repos, WREN);
    await addPatient(repos, OSWIN);
    const user = userEvent.setup();
    renderScreen(<TodayScreen />, { repositories: repos });
    const box = screen.getByLabelText('Name, clinic number or date of birth');

    await user.type(box, 'altam');
    const results = await screen.findByRole('list', { name: 'Search results' });
    await waitFor(() => expect(within(results).getAllByRole('listitem')).toHaveLength(1));
    expect(resultNames()).toEqual(['Wren Altamira']);

    await user.clear(box);
    await user.type(box, 'qx-99');
    await waitFor(() => expect(resultNames()).toEqual(['Oswin Belgrave']));
    expect(screen.queryByText('Wren Altamira')).toBeNull();

    await user.clear(box);
    await user.type(box, '2016-04-09');
    await waitFor(() => expect(resultNames()).toEqual(['Wren Altamira']));
    expect(screen.queryByText('Oswin Belgrave')).toBeNull();

    await user.clear(box);
    await user.type(box, 'zzz');
    await waitFor(() =>
      expect(document.querySelector('.flc-results')?.textContent).toBe(
        'No patient on this tablet matches “zzz”.',
      ),
    );
    expect(resultNames()).toEqual([]);
  });

  it('finds a date of birth typed day first or unpadded, and counts only this query’s results', async () => {
    const repos = setup();
    await addPatient(repos, WREN);
    await addPatient(repos, {
      givenName: 'Oswin',
      familyName: 'Belgrave',
      dateOfBirth: '2016-04-19',
      clinicNumber: 'QX-9921',
    });
    const user = userEvent.setup();
    renderScreen(<TodayScreen />, { repositories: repos });
    const box = screen.getByLabelText('Name, clinic number or date of birth');

    await user.type(box, '9/4/2016');
    await waitFor(() => expect(status()).toBe('1 patient found'));
    const results = screen.getByRole('list', { name: 'Search results' });
    expect(within(results).getAllByRole('listitem')).toHaveLength(1);
    expect(resultNames()).toEqual(['Wren Altamira']);

    await user.clear(box);
    await user.type(box, '2016-4');
    await waitFor(() => expect(status()).toBe('2 patients found'));
    expect(resultNames().sort()).toEqual(['Oswin Belgrave', 'Wren Altamira']);
    expect(screen.getByRole('list', { name: 'Search results' }).getAttribute('aria-busy')).toBe(
      'false',
    );
  });

  it('never brings back the rows of a query the person cleared while the next one runs', async () => {
    const repos = setup();
    await addPatient(repos, WREN);
    await addPatient(repos, OSWIN);
    const user = userEvent.setup();
    renderScreen(<TodayScreen />, { repositories: repos });
    const box = screen.getByLabelText('Name, clinic number or date of birth');
    await user.type(box, 'wren');
    await screen.findByText('Wren Altamira');
    await user.clear(box);
    expect(screen.queryByRole('list', { name: 'Search results' })).toBeNull();

    // Every DOM change from here on is checked for the cleared query's row.
    let staleRowShown = false;
    const observer = new MutationObserver(() => {
      if (document.body.textContent?.includes('Wren Altamira')) staleRowShown = true;
    });
    observer.observe(document.body, { childList: true, subtree: true, characterData: true });
    await user.type(box, 'oswin');
    await screen.findByText('Oswin Belgrave');
    observer.disconnect();
    expect(staleRowShown).toBe(false);
    expect(status()).toBe('1 patient found');
  });

  it('opens the Chart from a result inside the app, and leaves a modified click to the browser', async () => {
    const repos = setup();
    const patientId = await addPatient(repos, WREN);
    const user = userEvent.setup();
    renderScreen(<TodayScreen />, { repositories: repos });
    await user.type(screen.getByLabelText('Name, clinic number or date of birth'), 'wren');
    const chart = await screen.findByRole('link', { name: 'Chart: Wren Altamira' });
    expect(chart.getAttribute('href')).toBe(`/chart/${patientId}`);

    // A click with Ctrl held is the browser's (a new tab): the app does not navigate.
    let browserDefault = true;
    const keepDefault = (event: Event) => {
      browserDefault = !event.defaultPrevented;
      event.preventDefault();
    };
    document.addEventListener('click', keepDefault);
    await user.keyboard('{Control>}');
    await user.click(chart);
    await user.keyboard('{/Control}');
    document.removeEventListener('click', keepDefault);
    expect(browserDefault).toBe(true);
    expect(screen.getByTestId('location').textContent).toBe('/');

    await user.click(chart);
    await waitFor(() =>
      expect(screen.getByTestId('location').textContent).toBe(`/chart/${patientId}`),
    );
  });

  it('starts a draft visit for a found patient and lists it as today’s, ready to resume', async () => {
    const repos = setup();
    const patientId = await addPatient(repos, WREN);
    const user = userEvent.setup();
    renderScreen(<TodayScreen />, { repositories: repos });
    await user.type(screen.getByLabelText('Name, clinic number or date of birth'), 'wren');
    await user.click(await screen.findByRole('button', { name: 'Start visit: Wren Altamira' }));

    await waitFor(() => expect(screen.getByTestId('location').textContent).toMatch(/^\/visit\//));
    const visits = await repos.records.listByField('visit', 'patientId', patientId);
    expect(visits).toHaveLength(1);
    expect(visits[0]!.fields).toMatchObject({
      status: 'draft',
      date: localDate(),
      siteId: TEST_SITE_ID,
    });
    expect((await repos.outbox.listEntries()).some((e) => e.recordId === visits[0]!.id)).toBe(true);
  });

  it('offers to resume an unfinished visit of today instead of starting a second', async () => {
    const repos = setup();
    const patientId = await addPatient(repos, WREN);
    const visitId = await repos.records.create(
      'visit',
      {
        siteId: TEST_SITE_ID,
        patientId,
        date: localDate(),
        clinicianId: '0190c6a0-0000-7000-8000-00000000d001',
        status: 'draft',
        reason: 'Review of control',
      },
      editContext(),
    );
    renderScreen(<TodayScreen />, { repositories: repos });
    const list = await screen.findByRole('list', { name: 'Today’s visits' });
    const resume = within(list).getByRole('link', { name: 'Resume visit: Wren Altamira' });
    expect(resume.getAttribute('href')).toBe(`/visit/${visitId}`);
    expect(resume.closest('li')?.querySelector('.flc-badge')?.textContent).toBe('Draft');
  });
});

describe('the visit state badge on Today', () => {
  it('reads Draft beside the patient’s name on one line, not stretched among the row’s buttons', async () => {
    // The screen's own stylesheet, so the computed style is what Chromium applies.
    const style = document.createElement('style');
    style.textContent = readFileSync(
      resolve(import.meta.dirname, '../../components/charting/charting.css'),
      'utf8',
    );
    document.head.append(style);
    try {
      const repos = setup();
      const patientId = await addPatient(repos, OSWIN);
      await repos.records.create(
        'visit',
        {
          siteId: TEST_SITE_ID,
          patientId,
          date: localDate(),
          clinicianId: '0190c6a0-0000-7000-8000-00000000d001',
          status: 'draft',
          reason: 'Diplopia on reading',
        },
        editContext(),
      );
      renderScreen(<TodayScreen />, { repositories: repos });
      const list = await screen.findByRole('list', { name: 'Today’s visits' });
      const row = within(list).getByRole('listitem');
      const badge = row.querySelector('.flc-badge') as HTMLElement;
      expect(badge.textContent).toBe('Draft');
      // It shares the heading line with the name and is not one of the actions.
      expect(badge.parentElement?.querySelector('.flc-row__title')?.textContent).toBe(
        'Oswin Belgrave',
      );
      expect(badge.closest('.flc-actions')).toBeNull();
      const drawn = getComputedStyle(badge);
      expect([drawn.alignSelf, drawn.whiteSpace, drawn.display]).toEqual([
        'center',
        'nowrap',
        'inline-flex',
      ]);
    } finally {
      style.remove();
    }
  });
});

describe('the new patient form', () => {
  it('names each missing or wrong field beside it and saves nothing', async () => {
    const repos = setup();
    const user = userEvent.setup();
    renderScreen(<TodayScreen />, { repositories: repos });
    await user.click(screen.getByRole('button', { name: 'New patient' }));
    await user.click(await screen.findByRole('button', { name: 'Save patient' }));

    await waitFor(() =>
      expect(fieldMessage('Given name')).toEqual(['true', 'Given name cannot be empty']),
    );
    expect(fieldMessage('Family name')).toEqual(['true', 'Family name cannot be empty']);
    expect(fieldMessage('Clinic number')).toEqual(['true', 'Clinic number cannot be empty']);
    const dob = screen.getByLabelText('Date of birth');
    expect(dob.getAttribute('aria-invalid')).toBe('true');
    expect(await repos.records.list('patient')).toHaveLength(0);
  });

  it('refuses a date of birth in the future', async () => {
    const repos = setup();
    const user = userEvent.setup();
    renderScreen(<TodayScreen />, { repositories: repos });
    await user.click(screen.getByRole('button', { name: 'New patient' }));
    await user.type(screen.getByLabelText('Given name'), 'Wren');
    await user.type(screen.getByLabelText('Family name'), 'Altamira');
    await user.type(screen.getByLabelText('Date of birth'), '2999-01-01');
    await user.type(screen.getByLabelText('Clinic number'), 'QX-1');
    await user.click(screen.getByRole('button', { name: 'Save patient' }));
    await waitFor(() =>
      expect(fieldMessage('Date of birth')).toEqual([
        'true',
        'Date of birth cannot be in the future',
      ]),
    );
    expect(await repos.records.list('patient')).toHaveLength(0);
  });

  it('saves a valid patient and opens the Chart', async () => {
    const repos = setup();
    const user = userEvent.setup();
    renderScreen(<TodayScreen />, { repositories: repos });
    await user.click(screen.getByRole('button', { name: 'New patient' }));
    await user.type(screen.getByLabelText('Given name'), 'Wren');
    await user.type(screen.getByLabelText('Family name'), 'Altamira');
    await user.type(screen.getByLabelText('Date of birth'), '2016-04-09');
    await user.type(screen.getByLabelText('Clinic number'), 'QX-1');
    await user.click(screen.getByRole('button', { name: 'Save patient' }));
    await waitFor(() => expect(screen.getByTestId('location').textContent).toMatch(/^\/chart\//));
    const patients = await repos.records.list('patient');
    expect(patients.map((p) => p.fields)).toEqual([
      expect.objectContaining({
        givenName: 'Wren',
        dateOfBirth: '2016-04-09',
        siteId: TEST_SITE_ID,
      }),
    ]);
  });
});
