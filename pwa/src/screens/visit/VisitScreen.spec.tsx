import { readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { CLINICAL_CAUTION, collectionLabel } from '@fuselight/shared';
import { render, screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { AuthDb, type KnownSite } from '../../auth/auth-db';
import { SessionProvider } from '../../auth/SessionProvider';
import { SessionContext } from '../../auth/session-context';
import { SessionStore } from '../../auth/session-store';
import { InterpretationSummary } from '../../components/charting/InterpretationSummary';
import {
  createPatientVisit,
  ORTHOPTIST,
  SUPERVISOR,
  TEST_DEVICE_ID,
  TEST_SITE_ID,
  editContext,
  freshRepositories,
  renderScreen,
} from '../../components/charting/test-support';
import { ChartingRepository, VisitLockedError, VisitRuleError } from '../../data/charting';
import { notifyDataChange } from '../../data/data-events';
import { refuseWritesForQuota } from '../../data/quota-refusal.fixture';
import { STORAGE_FULL_WORDS } from '../../data/storage-full';
import VisitScreen from './VisitScreen';

type Repos = ReturnType<typeof freshRepositories>;
const opened: Repos[] = [];
const authDbs: AuthDb[] = [];
afterEach(async () => {
  vi.restoreAllMocks();
  for (const repos of opened.splice(0)) {
    repos.db.close();
    await repos.db.delete();
  }
  for (const db of authDbs.splice(0)) {
    db.close();
    await db.delete();
  }
});

/** The tablet's identity database, holding the site names GET /api/me/sites last gave. */
async function authDbWith(sites: readonly Omit<KnownSite, 'fetchedAt'>[] = []): Promise<AuthDb> {
  const db = new AuthDb(`visit-auth-${crypto.randomUUID()}`);
  authDbs.push(db);
  await db.sites.bulkPut(sites.map((site) => ({ ...site, fetchedAt: Date.now() })));
  return db;
}

async function setupVisit(overrides: Record<string, unknown> = {}) {
  const repos = freshRepositories();
  opened.push(repos);
  const { patientId, visitId } = await createPatientVisit(repos, { visit: overrides });
  return { repos, patientId, visitId, charting: new ChartingRepository(repos.records) };
}

/**
 * The Visit screen under a session store (the panels read site names and tokens from it), with the
 * test's person in the session context. The store never reaches a network: background is off.
 */
function renderVisit(repos: Repos, visitId: string, user = ORTHOPTIST, authDb?: AuthDb) {
  const db = authDb ?? new AuthDb(`visit-auth-${crypto.randomUUID()}`);
  if (!authDb) authDbs.push(db);
  const store = new SessionStore({ db: () => db, countOutbox: async () => 0 });
  return renderScreen(
    <SessionProvider store={store} background={false}>
      <SessionContext.Provider
        value={{ user, deviceId: TEST_DEVICE_ID, activeSiteId: TEST_SITE_ID }}
      >
        <VisitScreen />
      </SessionContext.Provider>
    </SessionProvider>,
    {
      repositories: repos,
      user,
      path: `/visit/${visitId}`,
      route: '/visit/:visitId',
    },
  );
}

/**
 * A Section opened as a clinician opens it: the Visit lists each folded to one line, and its
 * heading opens it in place.
 */
async function openedSection(name: string): Promise<HTMLElement> {
  const section = await screen.findByRole('region', { name });
  const heading = within(section).getByRole('button', { name });
  if (heading.getAttribute('aria-expanded') !== 'true') await userEvent.click(heading);
  expect(heading.getAttribute('aria-expanded')).toBe('true');
  return section;
}

function sectionNamed(name: string): HTMLElement {
  return screen.getByRole('region', { name });
}

/** What a Section's save indicator says. */
const saveStateOf = (section: HTMLElement) => section.querySelector('.flc-saved')?.textContent;

/** The message a field is described by (its unit hint, reading or refusal). */
function messageOf(field: HTMLElement): string | null | undefined {
  const id = field.getAttribute('aria-describedby');
  return id === null ? undefined : document.getElementById(id)?.textContent;
}

/** The Sign panel's line saying who signed and when. */
const signedLine = () =>
  [...sectionNamed('Sign and Addenda').querySelectorAll('p')]
    .map((p) => p.textContent)
    .find((text) => text?.startsWith('Signed by'));

/** The Letters panel's letterhead line. */
const letterheadOf = (letters: HTMLElement) =>
  [...letters.querySelectorAll('p')]
    .map((p) => p.textContent)
    .find((text) => text?.startsWith('Letterhead:'));

/** Every line the interpretation summary shows under its findings. */
const interpretationLines = () =>
  [...screen.getByRole('region', { name: 'Interpretation' }).querySelectorAll('article p')].map(
    (p) => p.textContent,
  );

describe('a Visit Section form', () => {
  it('saves a typed value to the repository with its Outbox entry and only then says Saved', async () => {
    const { repos, visitId, patientId } = await setupVisit();
    const user = userEvent.setup();
    renderVisit(repos, visitId);
    const npc = await openedSection('Near point of convergence');
    await user.type(within(npc).getByLabelText('Near point of convergence, break'), '8');
    await user.tab();
    await waitFor(() => expect(saveStateOf(npc)).toBe('Saved on this tablet'));

    const stored = await repos.records.listByField('nearPointConvergence', 'visitId', visitId);
    expect(stored).toHaveLength(1);
    expect(stored[0]!.fields).toMatchObject({
      breakCm: 8,
      visitId,
      patientId,
      siteId: TEST_SITE_ID,
    });
    const entries = await repos.outbox.listEntries();
    expect(entries.some((e) => e.recordId === stored[0]!.id && e.fields.breakCm === 8)).toBe(true);
  });

  it('keeps what was typed and says so when the tablet’s storage is full, losing no Outbox entry', async () => {
    const { repos, visitId } = await setupVisit();
    const entriesBefore = await repos.outbox.listEntries();
    const user = userEvent.setup();
    renderVisit(repos, visitId);
    const npc = await screen.findByRole('region', { name: 'Near point of convergence' });
    const breakField = within(npc).getByLabelText('Near point of convergence, break');
    refuseWritesForQuota('records');
    await user.type(breakField, '9');
    await user.tab();
    await waitFor(() => expect(saveStateOf(npc)).toBe(`Not saved: ${STORAGE_FULL_WORDS}`));
    expect((breakField as HTMLInputElement).value).toBe('9');
    expect(await repos.outbox.listEntries()).toEqual(entriesBefore);
    expect(await repos.records.listByField('nearPointConvergence', 'visitId', visitId)).toEqual([]);

    // Room again: the next change saves what is on screen.
    vi.restoreAllMocks();
    await user.type(breakField, '{Backspace}10');
    await user.tab();
    await waitFor(() => expect(saveStateOf(npc)).toBe('Saved on this tablet'));
    const stored = await repos.records.listByField('nearPointConvergence', 'visitId', visitId);
    expect(stored[0]!.fields.breakCm).toBe(10);
    const entries = await repos.outbox.listEntries();
    expect(entries.slice(0, entriesBefore.length)).toEqual(entriesBefore);
  });

  it('shows the unit beside a number and the schema’s message beside a refused value, saving nothing', async () => {
    const { repos, visitId } = await setupVisit();
    const user = userEvent.setup();
    renderVisit(repos, visitId);
    const npc = await openedSection('Near point of convergence');
    const input = within(npc).getByLabelText('Near point of convergence, break');
    expect(within(npc).getAllByText('cm').length).toBeGreaterThan(0);

    await user.type(input, 'abc');
    await waitFor(() =>
      expect(messageOf(input)).toBe('Near point of convergence, break must be a number'),
    );
    expect(input.getAttribute('aria-invalid')).toBe('true');
    await user.clear(input);
    await user.type(input, '150');
    await waitFor(() =>
      expect(messageOf(input)).toBe(
        'Near point of convergence, break must be between 0 and 100 cm',
      ),
    );
    expect((input as HTMLInputElement).value).toBe('150');
    await user.tab();
    await new Promise((resolve) => setTimeout(resolve, 500));
    expect(
      await repos.records.listByField('nearPointConvergence', 'visitId', visitId),
    ).toHaveLength(0);
    expect(screen.getByRole('button', { name: 'Sign visit' })).toHaveProperty('disabled', true);
  });

  it('stores a typed acuity with its logMAR and shows the Snellen line', async () => {
    const { repos, visitId } = await setupVisit();
    const user = userEvent.setup();
    renderVisit(repos, visitId);
    const acuity = await openedSection('Visual acuity');
    await user.type(within(acuity).getByLabelText('Right eye, distance, corrected'), '6/12');
    expect(messageOf(within(acuity).getByLabelText('Right eye, distance, corrected'))).toBe(
      '0.30 logMAR (Snellen 6/12)',
    );
    await user.tab();
    await waitFor(() => expect(saveStateOf(acuity)).toBe('Saved on this tablet'));
    const [record] = await repos.records.listByField('visualAcuity', 'visitId', visitId);
    expect(record!.fields.rightDistanceCorrectedNotation).toBe('6/12');
    expect(record!.fields.rightDistanceCorrectedLogMar).toBeCloseTo(0.30103, 4);
  });

  it('shows a value a sync brings after a field was saved here and left', async () => {
    const { repos, visitId } = await setupVisit();
    const user = userEvent.setup();
    renderVisit(repos, visitId);
    const npc = await openedSection('Near point of convergence');
    const input = within(npc).getByLabelText<HTMLInputElement>('Near point of convergence, break');
    await user.type(input, '8');
    await user.tab();
    await waitFor(() => expect(saveStateOf(npc)).toBe('Saved on this tablet'));
    const [saved] = await repos.records.listByField('nearPointConvergence', 'visitId', visitId);

    // What a pull stores once the server has settled the field (say, a supervisor resolved a
    // dispute to 12 cm): the record's value, nothing pending; then the engine's change notice.
    await repos.db.records.update(['nearPointConvergence', saved!.id] as unknown as string, {
      'fields.breakCm': 12,
      pendingFields: [],
      serverFields: {},
    });
    notifyDataChange({
      collections: ['nearPointConvergence'],
      recordIds: [saved!.id],
      outbox: false,
    });
    await waitFor(() => expect(input.value).toBe('12'));
  });

  it('marks a disputed field beside it', async () => {
    const { repos, visitId, charting } = await setupVisit();
    const id = await charting.saveSection(
      visitId,
      'coverTest',
      { nearFinding: 'phoria' },
      editContext(),
    );
    await repos.db.records.update(['coverTest', id] as unknown as string, {
      conflicts: ['nearFinding'],
    });
    renderVisit(repos, visitId);
    const cover = await openedSection('Cover test');
    const group = within(cover).getByRole('group', { name: 'Near cover test' });
    // One mark in the Section, and it sits with the near cover test.
    const marks = [...cover.querySelectorAll('.flc-dispute')];
    expect(marks.map((mark) => [mark.textContent, group.parentElement!.contains(mark)])).toEqual([
      ['Disputed', true],
    ]);
    expect(marks[0]!.getAttribute('title')).toMatch(/a supervisor settles it in Disputes/);
  });
});

describe('the Visit at a glance', () => {
  /** The one line a folded Section shows. */
  const summaryOf = (section: HTMLElement) =>
    section.querySelector('.flc-fold-summary')?.textContent ?? null;

  it('lists each Section folded to one line of what is recorded, or why it was not done', async () => {
    const { repos, visitId, charting } = await setupVisit({ reason: 'Intermittent diplopia' });
    await charting.saveSection(
      visitId,
      'coverTest',
      { nearFinding: 'phoria', nearHorizontalDirection: 'exo', nearControl: 'good' },
      editContext(),
    );
    await charting.saveSection(
      visitId,
      'stereoacuity',
      { skippedReason: 'Too tired after the amblyoscope' },
      editContext(),
    );
    renderVisit(repos, visitId);
    const cover = await screen.findByRole('region', { name: 'Cover test' });
    await waitFor(() =>
      expect(summaryOf(cover)).toBe(
        'Near cover test Phoria · Near horizontal direction Exo · Near recovery or control Good',
      ),
    );
    const stereo = sectionNamed(collectionLabel('stereoacuity'));
    expect(summaryOf(stereo)).toBe('Not done: Too tired after the amblyoscope');
    expect(summaryOf(sectionNamed('Near point of convergence'))).toBe('Nothing recorded yet');
    expect(summaryOf(sectionNamed('Visit'))).toBe('Reason: Intermittent diplopia');
    expect(summaryOf(sectionNamed('Amblyoscope'))).toBe('Nothing recorded at the amblyoscope yet');
    // Folded: the fields are not on screen until the Section is opened.
    expect(
      within(cover).getByRole('button', { name: 'Cover test' }).getAttribute('aria-expanded'),
    ).toBe('false');
    expect(within(cover).queryByRole('radiogroup')).toBeNull();
    expect(within(cover).queryByRole('group', { name: 'Near cover test' })).toBeNull();
  });

  it('opens a Section in place from its heading or its jump link, which stay in view', async () => {
    const style = document.createElement('style');
    style.textContent = readFileSync(
      resolve(import.meta.dirname, '../../components/charting/charting.css'),
      'utf8',
    );
    document.head.append(style);
    try {
      const { repos, visitId } = await setupVisit();
      const user = userEvent.setup();
      renderVisit(repos, visitId);
      const cover = await screen.findByRole('region', { name: 'Cover test' });
      await user.click(within(cover).getByRole('button', { name: 'Cover test' }));
      expect(within(cover).getByRole('group', { name: 'Near cover test' })).not.toBeNull();
      expect(summaryOf(cover)).toBeNull();
      await user.click(within(cover).getByRole('button', { name: 'Cover test' }));
      expect(within(cover).queryByRole('group', { name: 'Near cover test' })).toBeNull();

      const jumps = screen.getByRole('navigation', { name: 'Sections of this visit' });
      expect(getComputedStyle(jumps).position).toBe('sticky');
      await user.click(within(jumps).getByRole('button', { name: 'Near point of convergence' }));
      const npc = sectionNamed('Near point of convergence');
      expect(within(npc).getByLabelText('Near point of convergence, break')).not.toBeNull();
      expect(
        within(npc)
          .getByRole('button', { name: 'Near point of convergence' })
          .getAttribute('aria-expanded'),
      ).toBe('true');

      await user.click(within(jumps).getByRole('button', { name: 'Open all Sections' }));
      expect(
        screen
          .queryAllByRole('button', { expanded: false })
          .filter((b) => b.classList.contains('flc-fold')),
      ).toEqual([]);
      await user.click(within(jumps).getByRole('button', { name: 'Fold all Sections' }));
      expect(summaryOf(npc)).toBe('Nothing recorded yet');
    } finally {
      style.remove();
    }
  });

  it('keeps a Section open while it holds a refused value', async () => {
    const { repos, visitId } = await setupVisit();
    const user = userEvent.setup();
    renderVisit(repos, visitId);
    const npc = await openedSection('Near point of convergence');
    const input = within(npc).getByLabelText('Near point of convergence, break');
    await user.type(input, 'abc');
    await waitFor(() => expect(messageOf(input)).toMatch(/must be a number/));
    const heading = within(npc).getByRole('button', { name: 'Near point of convergence' });
    await user.click(heading);
    expect(heading.getAttribute('aria-expanded')).toBe('true');
    expect(within(npc).getByLabelText('Near point of convergence, break')).toBe(input);
  });
});

describe('signing, countersigning and addenda', () => {
  it('locks the Sections once signed, on screen and in the repository', async () => {
    const { repos, visitId, charting } = await setupVisit();
    await charting.saveSection(
      visitId,
      'plan',
      { impression: 'Controlled exophoria' },
      editContext(),
    );
    const user = userEvent.setup();
    renderVisit(repos, visitId);
    await user.click(await screen.findByRole('button', { name: 'Sign visit' }));

    await waitFor(() =>
      expect(sectionNamed('Sign and Addenda').querySelector('.flc-badge')?.textContent).toBe(
        'Signed',
      ),
    );
    const visit = await repos.records.get('visit', visitId);
    expect(visit!.fields).toMatchObject({ status: 'signed', signedBy: ORTHOPTIST.id });
    expect(typeof visit!.fields.signedAt).toBe('string');
    await waitFor(() =>
      expect(
        within(sectionNamed('Near point of convergence')).getByLabelText(
          'Near point of convergence, break',
        ),
      ).toHaveProperty('disabled', true),
    );
    await expect(
      charting.saveSection(visitId, 'plan', { impression: 'Changed after signing' }, editContext()),
    ).rejects.toBeInstanceOf(VisitLockedError);
    const [plan] = await repos.records.listByField('plan', 'visitId', visitId);
    expect(plan!.fields.impression).toBe('Controlled exophoria');
  });

  it('names who signed: "you", a colleague by the name the tablet holds, or a stand-in for someone unknown', async () => {
    const { repos, visitId, charting } = await setupVisit();
    await charting.sign(visitId, ORTHOPTIST, editContext());

    const asSigner = renderVisit(repos, visitId, ORTHOPTIST);
    await waitFor(() => expect(signedLine()).toMatch(/^Signed by you at /));
    asSigner.unmount();

    const unknown = renderVisit(repos, visitId, SUPERVISOR);
    await waitFor(() =>
      expect(signedLine()).toMatch(
        /^Signed by a colleague not yet known to this tablet \(…00d001\) at /,
      ),
    );
    unknown.unmount();

    const authDb = await authDbWith();
    await authDb.colleagues.put({
      id: ORTHOPTIST.id,
      name: 'Isolde Farrant',
      role: 'orthoptist',
      fetchedAt: Date.now(),
    });
    renderVisit(repos, visitId, SUPERVISOR, authDb);
    await waitFor(() => expect(signedLine()).toMatch(/^Signed by Isolde Farrant at /));
  });

  it('adds an Addendum as an addendum record with its Outbox entry and leaves the signed plan as it was', async () => {
    const { repos, visitId, patientId, charting } = await setupVisit();
    await charting.saveSection(
      visitId,
      'plan',
      { impression: 'Controlled exophoria' },
      editContext(),
    );
    await charting.sign(visitId, ORTHOPTIST, editContext());
    const user = userEvent.setup();
    renderVisit(repos, visitId);
    await user.click(await screen.findByLabelText('New Addendum'));
    await user.paste('Parent called: glasses broken.');
    await user.click(screen.getByRole('button', { name: 'Add Addendum' }));
    const list = await screen.findByRole('list', { name: 'Addenda' }, { timeout: 5000 });
    const [item, ...others] = within(list).getAllByRole('listitem');
    expect(others).toEqual([]);
    expect(item!.querySelector('strong')?.textContent).toMatch(/^Addendum by you, /);
    expect(item!.textContent).toMatch(/\nParent called: glasses broken\.$/);
    // Under the interpretation, beneath the signed content, too.
    const under = within(sectionNamed('Interpretation')).getByRole('list', {
      name: 'Addenda to the signed visit',
    });
    expect(
      within(under)
        .getAllByRole('listitem')
        .map((li) => li.textContent),
    ).toEqual([item!.textContent]);

    const plans = await repos.records.listByField('plan', 'visitId', visitId);
    expect(plans.map((p) => p.fields.impression)).toEqual(['Controlled exophoria']);
    const [addendum, ...more] = await repos.records.listByField('addendum', 'visitId', visitId);
    expect(more).toEqual([]);
    expect(addendum!.fields).toEqual({
      siteId: TEST_SITE_ID,
      visitId,
      patientId,
      authorId: ORTHOPTIST.id,
      writtenAt: expect.stringMatching(/^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d\.\d{3}Z$/),
      text: 'Parent called: glasses broken.',
    });
    const entries = await repos.outbox.listEntries();
    expect(entries.some((e) => e.collection === 'addendum' && e.recordId === addendum!.id)).toBe(
      true,
    );
    const bundle = await charting.visitBundle(visitId);
    expect(bundle!.sections.plan!.fields.impression).toBe('Controlled exophoria');
    expect(bundle!.addenda.map((a) => [a.text, a.authorId, a.storedAs])).toEqual([
      ['Parent called: glasses broken.', ORTHOPTIST.id, 'addendum'],
    ]);
  });

  it('refuses an empty Addendum on screen and in the repository, writing nothing', async () => {
    const { repos, visitId, charting } = await setupVisit();
    await charting.sign(visitId, ORTHOPTIST, editContext());
    await expect(
      charting.addAddendum(visitId, { text: '   ', author: ORTHOPTIST }, editContext()),
    ).rejects.toThrow('Write what the Addendum adds or corrects.');
    const user = userEvent.setup();
    renderVisit(repos, visitId);
    await user.click(await screen.findByRole('button', { name: 'Add Addendum' }));
    await waitFor(() =>
      expect(messageOf(screen.getByLabelText('New Addendum'))).toBe(
        'Write what the Addendum adds or corrects.',
      ),
    );
    expect(await repos.records.listByField('addendum', 'visitId', visitId)).toEqual([]);
  });

  it('shows an Addendum the server wrote for a resolved dispute, with the field amended and its values', async () => {
    const { repos, visitId, patientId, charting } = await setupVisit();
    await charting.saveSection(
      visitId,
      'amblyoscopeAngles',
      { objectiveHorizontalDeg: 12 },
      editContext(),
    );
    await charting.sign(visitId, ORTHOPTIST, editContext());
    const anglesId = (await repos.records.listByField('amblyoscopeAngles', 'visitId', visitId))[0]!
      .id;
    // As a pull would leave it: a record this tablet did not make.
    await repos.db.records.put({
      collection: 'addendum',
      id: '0190c6a0-0000-7000-8000-00000000ad01',
      version: 7001,
      deleted: false,
      fields: {
        siteId: TEST_SITE_ID,
        visitId,
        patientId,
        authorId: SUPERVISOR.id,
        writtenAt: '2026-12-02T09:00:00.000Z',
        text: 'Both tablets measured after signing; 21° confirmed',
        amendedCollection: 'amblyoscopeAngles',
        amendedRecordId: anglesId,
        amendedField: 'objectiveHorizontalDeg',
        previousValue: 12,
        newValue: 21,
        conflictId: '0190c6a0-0000-7000-8000-00000000cf01',
      },
      conflicts: [],
      pendingFields: [],
      serverFields: {},
      updatedAt: Date.now(),
    });
    renderVisit(repos, visitId);
    const list = await screen.findByRole('list', { name: 'Addenda' });
    const [item, ...others] = within(list).getAllByRole('listitem');
    expect(others).toEqual([]);
    expect(item!.querySelector('strong')?.textContent).toMatch(
      /^Addendum from a resolved dispute by /,
    );
    expect(item!.querySelector('.flc-addendum__amends')?.textContent).toBe(
      'Amends Amblyoscope angles · Objective horizontal angle: 12° → 21°',
    );
    expect(item!.textContent).toMatch(/\nBoth tablets measured after signing; 21° confirmed$/);
  });

  it('still shows an Addendum an earlier app version kept as a marked plan record, apart from the plan', async () => {
    const { repos, visitId, charting } = await setupVisit();
    await charting.saveSection(
      visitId,
      'plan',
      { impression: 'Controlled exophoria' },
      editContext(),
    );
    await charting.sign(visitId, ORTHOPTIST, editContext());
    await repos.db.records.put({
      collection: 'plan',
      id: '0190c6a0-0000-7000-8000-ffffffffff01',
      version: 12,
      deleted: false,
      fields: {
        siteId: TEST_SITE_ID,
        visitId,
        patientId: (await repos.records.get('visit', visitId))!.fields.patientId,
        impression: `Addendum ·\t2026-12-01T10:00:00.000Z\t${ORTHOPTIST.id}\tTest Orthoptist\nCalled the school.`,
      },
      conflicts: [],
      pendingFields: [],
      serverFields: {},
      updatedAt: Date.now(),
    });
    const bundle = await charting.visitBundle(visitId);
    expect(bundle!.sections.plan!.fields.impression).toBe('Controlled exophoria');
    expect(bundle!.addenda.map((a) => [a.text, a.authorName, a.storedAs])).toEqual([
      ['Called the school.', 'Test Orthoptist', 'plan'],
    ]);
  });

  it('refuses an Addendum on a draft and a countersignature the visit does not need', async () => {
    const { visitId, charting } = await setupVisit();
    await expect(
      charting.addAddendum(visitId, { text: 'Too early', author: ORTHOPTIST }, editContext()),
    ).rejects.toBeInstanceOf(VisitRuleError);
    await charting.sign(visitId, ORTHOPTIST, editContext());
    await expect(
      charting.countersign(visitId, SUPERVISOR, editContext(SUPERVISOR)),
    ).rejects.toThrow('This visit does not need countersigning.');
  });

  it('lets a supervisor, and not the signer, countersign a visit that needs it', async () => {
    const { repos, visitId, charting } = await setupVisit({ needsCountersign: true });
    await charting.sign(visitId, ORTHOPTIST, editContext());
    const first = renderVisit(repos, visitId, ORTHOPTIST);
    const own = await screen.findByRole('button', { name: 'Countersign' });
    expect(own).toHaveProperty('disabled', true);
    expect(own.parentElement?.querySelector('p.fl-muted')?.textContent).toBe(
      'Only a supervisor can countersign.',
    );
    first.unmount();

    const user = userEvent.setup();
    renderVisit(repos, visitId, SUPERVISOR);
    await user.click(await screen.findByRole('button', { name: 'Countersign' }));
    await waitFor(async () =>
      expect((await repos.records.get('visit', visitId))!.fields).toMatchObject({
        status: 'countersigned',
        countersignedBy: SUPERVISOR.id,
      }),
    );
    await waitFor(() =>
      expect(sectionNamed('Sign and Addenda').querySelector('.flc-badge')?.textContent).toBe(
        'Countersigned',
      ),
    );
  });
});

describe('letters and photos on the Visit', () => {
  it('puts the site name the tablet holds on the letterhead, with a placeholder address line', async () => {
    const { repos, visitId } = await setupVisit();
    const authDb = await authDbWith([
      { id: TEST_SITE_ID, name: 'Brackenfold Orthoptic Clinic', kind: 'clinic', timeZone: 'UTC' },
    ]);
    renderVisit(repos, visitId, ORTHOPTIST, authDb);
    const letters = await screen.findByRole('region', { name: 'Letters' }, { timeout: 5000 });
    await waitFor(() =>
      expect(letterheadOf(letters)).toBe(
        'Letterhead: Brackenfold Orthoptic Clinic · Site address not on this tablet yet (the letter the clinic server sends prints it)',
      ),
    );
  });

  it('puts the site’s address the tablet holds on the letterhead, a line at each comma', async () => {
    const { repos, visitId } = await setupVisit();
    const authDb = await authDbWith([
      {
        id: TEST_SITE_ID,
        name: 'Brackenfold Orthoptic Clinic',
        kind: 'clinic',
        timeZone: 'UTC',
        address: '12 Weir Row, Brackenfold, BF3 9LW',
      },
    ]);
    renderVisit(repos, visitId, ORTHOPTIST, authDb);
    const letters = await screen.findByRole('region', { name: 'Letters' }, { timeout: 5000 });
    await waitFor(() =>
      expect(letterheadOf(letters)).toBe(
        'Letterhead: Brackenfold Orthoptic Clinic · 12 Weir Row · Brackenfold · BF3 9LW',
      ),
    );
  });

  it('shows the visit with a stand-in letterhead name when the tablet has no site names yet', async () => {
    const { repos, visitId } = await setupVisit();
    renderVisit(repos, visitId);
    const letters = await screen.findByRole('region', { name: 'Letters' }, { timeout: 5000 });
    expect(letterheadOf(letters)).toMatch(
      /^Letterhead: Clinic site …00a001 \(name not synced to this tablet yet\)/,
    );
    // The rest of the visit shows and can be charted and signed.
    expect(
      within(sectionNamed('Near point of convergence')).getByLabelText(
        'Near point of convergence, break',
      ),
    ).toHaveProperty('disabled', false);
    expect(
      sectionNamed('Sign and Addenda').contains(screen.getByRole('button', { name: 'Sign visit' })),
    ).toBe(true);
  });

  it('places Letters after signing and Photos and files as their own section, both in the jump list', async () => {
    const { repos, visitId } = await setupVisit();
    renderVisit(repos, visitId);
    const sign = await screen.findByRole('region', { name: 'Sign and Addenda' });
    const letters = await screen.findByRole('region', { name: 'Letters' }, { timeout: 5000 });
    const files = await screen.findByRole(
      'region',
      { name: 'Photos and files' },
      { timeout: 5000 },
    );
    const follows = (a: Node, b: Node) =>
      (a.compareDocumentPosition(b) & Node.DOCUMENT_POSITION_FOLLOWING) !== 0;
    expect(follows(sign, letters)).toBe(true);
    expect(follows(letters, files)).toBe(true);
    expect(letters.contains(files)).toBe(false);
    // The panels themselves, not the stand-in a failing panel leaves.
    expect(within(files).getByRole('button', { name: 'Choose a file' })).toHaveProperty(
      'disabled',
      false,
    );
    expect(within(letters).getByRole('button', { name: 'New exercise handout' })).toHaveProperty(
      'disabled',
      false,
    );
    expect(letters.closest('#section-letters')).not.toBeNull();
    expect(files.closest('#section-attachments')).not.toBeNull();
    const jumps = screen.getByRole('navigation', { name: 'Sections of this visit' });
    // Both are in the jump list, in the order of the page, after Sign.
    expect(
      within(jumps)
        .getAllByRole('button')
        .map((b) => b.textContent)
        .filter((label) => !/ all Sections$/.test(label ?? ''))
        .slice(-4),
    ).toEqual(['Sign', 'Hospital record', 'Letters', 'Photos and files']);
  });

  it('drafts a letter on a signed visit, whose Sections stay locked', async () => {
    const { repos, visitId, charting } = await setupVisit();
    await charting.sign(visitId, ORTHOPTIST, editContext());
    const user = userEvent.setup();
    renderVisit(repos, visitId);
    const letters = await screen.findByRole('region', { name: 'Letters' }, { timeout: 5000 });
    await user.click(within(letters).getByRole('button', { name: 'New letter to the referrer' }));
    await waitFor(async () =>
      expect(await repos.records.listByField('letter', 'visitId', visitId)).toHaveLength(1),
    );
    expect(
      within(sectionNamed('Near point of convergence')).getByLabelText(
        'Near point of convergence, break',
      ),
    ).toHaveProperty('disabled', true);
  });
});

describe('the interpretation summary', () => {
  it('shows the caution beside a computed correspondence', () => {
    render(
      <InterpretationSummary
        sections={{
          amblyoscopeAngles: { objectiveHorizontalDeg: 14, subjectiveHorizontalDeg: 0 },
        }}
        ageYears={37}
      />,
    );
    const region = screen.getByRole('region', { name: 'Interpretation' });
    expect(within(region).getByRole('note').textContent).toContain(CLINICAL_CAUTION);
    expect(within(region).getByRole('note').textContent).toContain('local protocols');
    expect(interpretationLines()).toContainEqual(expect.stringMatching(/^harmonious ARC:/));
  });

  it('names the norms table and the cut-off it compared with', () => {
    render(
      <InterpretationSummary
        sections={{
          amblyoscopeAngles: { objectiveHorizontalDeg: 0, subjectiveHorizontalDeg: 0 },
          fusionalRanges: { divergenceBreakDeg: -5, convergenceBreakDeg: 26 },
          nearPointConvergence: { breakCm: 12, recoveryCm: 15 },
          accommodation: { rightAmplitudeD: 2 },
        }}
        ageYears={30}
      />,
    );
    const lines = interpretationLines();
    expect(lines).toContainEqual(
      expect.stringMatching(/^Norms table: Amblyoscope fusional amplitudes/),
    );
    expect(lines).toContainEqual(expect.stringMatching(/^receded: break 12\.0 cm is beyond 5 cm/));
    expect(lines).toContainEqual(
      expect.stringMatching(/Right: 2\.0 D, below the expected minimum/),
    );
  });

  it('says so when nothing can be interpreted yet, still with the caution', () => {
    render(<InterpretationSummary sections={{}} ageYears={undefined} />);
    const region = screen.getByRole('region', { name: 'Interpretation' });
    expect(region.querySelectorAll('article')).toHaveLength(0);
    expect(region.querySelector('p:not([role])')?.textContent).toBe(
      'Nothing to interpret yet: findings appear here as the Sections are charted.',
    );
    expect(screen.getByRole('note').textContent).toContain(CLINICAL_CAUTION);
  });
});
