import { screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { AuthDb } from '../auth/auth-db';
import { SessionProvider } from '../auth/SessionProvider';
import { SessionContext } from '../auth/session-context';
import { SessionStore } from '../auth/session-store';
import {
  createPatientVisit,
  ORTHOPTIST,
  TEST_DEVICE_ID,
  TEST_SITE_ID,
  freshRepositories,
  renderScreen,
} from '../components/charting/test-support';
import { getAttachmentDb } from './attachment-db';
import { uploadWaitingFiles } from './attachment-transfer';
import { AttachmentPanel } from './AttachmentPanel';

type Repos = ReturnType<typeof freshRepositories>;
const opened: Repos[] = [];
const authDbs: AuthDb[] = [];
let madeUrls: Blob[] = [];

beforeEach(() => {
  madeUrls = [];
  // jsdom has no object URLs; the stand-in remembers which blob each thumbnail was made from.
  vi.spyOn(URL, 'createObjectURL').mockImplementation((blob) => {
    madeUrls.push(blob as Blob);
    return `blob:test/${madeUrls.length}`;
  });
  vi.spyOn(URL, 'revokeObjectURL').mockImplementation(() => undefined);
});
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
  const files = getAttachmentDb();
  await files.files.clear();
  await files.transfers.clear();
});

function png(size: number): Uint8Array<ArrayBuffer> {
  const bytes = new Uint8Array(size);
  bytes.set([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
  for (let i = 8; i < size; i += 1) bytes[i] = (i * 31) % 251;
  return bytes;
}

async function aVisit() {
  const repos = freshRepositories();
  opened.push(repos);
  const { patientId, visitId } = await createPatientVisit(repos);
  return { repos, patientId, visitId };
}

/** The panel under a session store with nobody's tokens in it, so no upload reaches a network. */
function renderPanel(repos: Repos, visitId: string) {
  const db = new AuthDb(`attachment-auth-${crypto.randomUUID()}`);
  authDbs.push(db);
  const store = new SessionStore({ db: () => db, countOutbox: async () => 0 });
  return renderScreen(
    <SessionProvider store={store} background={false}>
      <SessionContext.Provider
        value={{ user: ORTHOPTIST, deviceId: TEST_DEVICE_ID, activeSiteId: TEST_SITE_ID }}
      >
        <AttachmentPanel visitId={visitId} />
      </SessionContext.Provider>
    </SessionProvider>,
    { repositories: repos },
  );
}

async function panel(): Promise<HTMLElement> {
  return screen.findByRole('region', { name: 'Photos and files' });
}

describe('the Photos and files panel', () => {
  it('says so when the visit has no photos or files', async () => {
    const { repos, visitId } = await aVisit();
    renderPanel(repos, visitId);
    const files = await panel();
    expect(files.textContent).toContain('No photos or files on this visit yet.');
    expect(within(files).queryByRole('img')).toBeNull();
    expect(within(files).queryByRole('list')).toBeNull();
  });

  it('keeps a chosen photo’s bytes on the tablet, writes its record and shows its thumbnail and caption', async () => {
    const { repos, visitId, patientId } = await aVisit();
    const user = userEvent.setup();
    renderPanel(repos, visitId);
    const files = await panel();
    await user.type(within(files).getByLabelText('Caption'), 'Head posture, chin up');
    const bytes = png(4096);
    await user.upload(
      within(files).getByLabelText('File to attach'),
      new File([bytes], 'posture.png', { type: 'image/png' }),
    );

    const thumbnail = await within(files).findByRole('img', { name: 'Head posture, chin up' });
    expect(thumbnail.getAttribute('src')).toMatch(/^blob:test\//);
    // The panel uploads nothing itself (the sync runtime does, on any screen); it shows what an
    // upload round elsewhere made of the file. The thumbnail is the button that opens the photo.
    await uploadWaitingFiles(getAttachmentDb(), { baseUrl: '', tokenFor: async () => null });
    expect(
      within(files).getByRole('button', { name: 'Open Head posture, chin up' }).contains(thumbnail),
    ).toBe(true);
    await waitFor(() =>
      expect(files.textContent).toContain(
        'Kept on this tablet until uploaded (sign in again to upload)',
      ),
    );
    expect((within(files).getByLabelText('Caption') as HTMLInputElement).value).toBe('');

    const [record, ...more] = await repos.records.listByField('attachment', 'visitId', visitId);
    expect(more).toEqual([]);
    expect(record!.fields).toMatchObject({
      siteId: TEST_SITE_ID,
      visitId,
      patientId,
      caption: 'Head posture, chin up',
      mimeType: 'image/png',
      byteSize: 4096,
      sha256: expect.stringMatching(/^[0-9a-f]{64}$/),
    });
    const stored = await getAttachmentDb().files.get(record!.id);
    expect(stored?.mimeType).toBe('image/png');
    expect(new Uint8Array(stored!.bytes)).toEqual(bytes);
    expect((await getAttachmentDb().transfers.get(record!.id))?.state).toBe('waiting');
    // The thumbnail was drawn from the stored bytes.
    const shown = madeUrls.at(-1)!;
    expect(shown.type).toBe('image/png');
    expect(new Uint8Array(await shown.arrayBuffer())).toEqual(bytes);
  });

  it('refuses a file whose content is not a photo or PDF, whatever its name, and keeps nothing', async () => {
    const { repos, visitId } = await aVisit();
    const user = userEvent.setup();
    renderPanel(repos, visitId);
    const files = await panel();
    await user.upload(
      within(files).getByLabelText('File to attach'),
      new File(['Name,Date of birth\nWren,2016-04-09\n'], 'scan.png', { type: 'image/png' }),
    );

    expect((await within(files).findByRole('alert')).textContent).toBe(
      'Not attached: the content is text, not a photo (JPEG, PNG, WebP or HEIC) or a PDF; only those can be attached',
    );
    expect(await repos.records.listByField('attachment', 'visitId', visitId)).toEqual([]);
    expect(await getAttachmentDb().files.count()).toBe(0);
    expect(files.textContent).toContain('No photos or files on this visit yet.');
    expect(within(files).queryByRole('img')).toBeNull();
  });

  it('takes the same file again after a refusal, once it is chosen a second time', async () => {
    const { repos, visitId } = await aVisit();
    const user = userEvent.setup();
    renderPanel(repos, visitId);
    const files = await panel();
    const input = within(files).getByLabelText('File to attach') as HTMLInputElement;
    await user.upload(input, new File([new Uint8Array(0)], 'empty.png', { type: 'image/png' }));
    expect((await within(files).findByRole('alert')).textContent).toBe(
      'Not attached: the file is empty',
    );
    expect(input.value).toBe('');
    await user.upload(input, new File([png(256)], 'empty.png', { type: 'image/png' }));
    await waitFor(async () =>
      expect(await repos.records.listByField('attachment', 'visitId', visitId)).toHaveLength(1),
    );
    expect(within(files).getByRole('alert').textContent).toBe('');
  });
});
