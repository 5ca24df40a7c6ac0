import { cleanup, render, screen, waitFor } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { ApiError } from '../../net/api-client';
import { HospitalRecordPanel } from './HospitalRecordPanel';
import { fetchVisitFhir, hospitalRecordWords } from './hospital-record';

const VISIT_ID = '01935a10-0002-7000-8000-000000000007';

afterEach(() => {
  cleanup();
  vi.restoreAllMocks();
});

describe('the hospital record on the Visit', () => {
  it('says when the visit was sent, in the site time zone', () => {
    expect(
      hospitalRecordWords(
        { hospitalRecordState: 'sent', hospitalRecordAt: '2026-07-14T09:42:00.000Z' },
        'Europe/London',
      ),
    ).toBe('Sent to the hospital record at 10:42 on 14 Jul 2026.');
  });

  it('says it waits, with the retry reason, or why it was refused', () => {
    expect(
      hospitalRecordWords(
        {
          hospitalRecordState: 'waiting',
          hospitalRecordNote: 'will retry: the hospital record answered 503: busy',
        },
        'UTC',
      ),
    ).toBe(
      'Waiting to send to the hospital record (will retry: the hospital record answered 503: busy).',
    );
    expect(
      hospitalRecordWords(
        {
          hospitalRecordState: 'refused',
          hospitalRecordNote: 'the hospital record answered 400: bad',
        },
        'UTC',
      ),
    ).toMatch(/^Refused by the hospital record: the hospital record answered 400: bad\. /);
    expect(hospitalRecordWords({}, 'UTC')).toBeNull();
  });

  it('offers no download for a draft visit and says what signing does', () => {
    render(
      <HospitalRecordPanel
        visitId={VISIT_ID}
        status="draft"
        fields={{}}
        timeZone="UTC"
        loadFhir={() => Promise.resolve('{}')}
      />,
    );
    expect(screen.getByTestId('hospital-record-state').textContent).toMatch(
      /^Once signed, this visit is sent to the hospital record/,
    );
    expect(screen.queryByRole('button', { name: 'Download FHIR' })).toBeNull();
  });

  it('downloads the FHIR export of a signed visit as a .fhir.json file', async () => {
    const made: Blob[] = [];
    vi.spyOn(URL, 'createObjectURL').mockImplementation((blob) => {
      made.push(blob as Blob);
      return 'blob:visit';
    });
    vi.spyOn(URL, 'revokeObjectURL').mockImplementation(() => undefined);
    const clicked: string[] = [];
    vi.spyOn(HTMLAnchorElement.prototype, 'click').mockImplementation(function (
      this: HTMLAnchorElement,
    ) {
      clicked.push(this.download);
    });
    const bundle = '{"resourceType":"Bundle","type":"collection"}';
    render(
      <HospitalRecordPanel
        visitId={VISIT_ID}
        status="signed"
        fields={{ hospitalRecordState: 'waiting' }}
        timeZone="UTC"
        loadFhir={() => Promise.resolve(bundle)}
      />,
    );
    expect(screen.getByTestId('hospital-record-state').textContent).toBe(
      'Waiting to send to the hospital record.',
    );
    await userEvent.click(screen.getByRole('button', { name: 'Download FHIR' }));
    await waitFor(() =>
      expect(screen.getByRole('alert').textContent).toBe('FHIR export downloaded.'),
    );
    expect(clicked).toEqual([`visit-${VISIT_ID}.fhir.json`]);
    expect(made[0]?.type).toBe('application/fhir+json');
    expect(await made[0]!.text()).toBe(bundle);
  });

  it('says why a download failed, in the tablet’s wording of the server’s answer', async () => {
    const fetchStub = vi.fn(() =>
      Promise.resolve(
        new Response(
          JSON.stringify({ statusCode: 404, message: `visit ${VISIT_ID} was not found` }),
          {
            status: 404,
            headers: { 'content-type': 'application/json' },
          },
        ),
      ),
    );
    render(
      <HospitalRecordPanel
        visitId={VISIT_ID}
        status="countersigned"
        fields={{}}
        timeZone="UTC"
        loadFhir={() => fetchVisitFhir({ fetch: fetchStub, token: 'tok', visitId: VISIT_ID })}
      />,
    );
    await userEvent.click(screen.getByRole('button', { name: 'Download FHIR' }));
    await waitFor(() =>
      expect(screen.getByRole('alert').textContent).toMatch(/^Not downloaded: .*was not found/),
    );
    expect(fetchStub).toHaveBeenCalledWith(
      `/api/visits/${VISIT_ID}/fhir`,
      expect.objectContaining({ method: 'GET' }),
    );
    await expect(
      fetchVisitFhir({ fetch: fetchStub, token: 'tok', visitId: VISIT_ID }),
    ).rejects.toBeInstanceOf(ApiError);
  });

  it('offers the download only online', () => {
    vi.spyOn(navigator, 'onLine', 'get').mockReturnValue(false);
    render(
      <HospitalRecordPanel
        visitId={VISIT_ID}
        status="signed"
        fields={{}}
        timeZone="UTC"
        loadFhir={() => Promise.resolve('{}')}
      />,
    );
    expect(screen.getByRole('button', { name: 'Download FHIR' })).toHaveProperty('disabled', true);
    expect(
      screen.getByText('Download FHIR needs a connection to the clinic server.'),
    ).toBeDefined();
  });
});
