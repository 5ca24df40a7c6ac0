// The letterhead of a visit's letters on the tablet: the name of the visit's site as the tablet
// last heard it from GET /api/me/sites (kept in the auth database, so it is there offline). The
// tablet holds no site address; the letter the clinic server e-mails prints the address from the
// site's settings, so the preview says so on the address line instead of leaving a gap.
import type { ClinicDetails } from '@fuselight/shared';
import type { KnownSite } from '../../auth/auth-db';

/** No commas: the letterhead splits an address into lines at commas and newlines. */
export const ADDRESS_NOT_ON_TABLET =
  'Site address not on this tablet (the letter the clinic server sends prints it)';

export function unknownSiteName(siteId: string): string {
  return `Clinic site …${siteId.slice(-6)} (name not synced to this tablet yet)`;
}

export function clinicForLetters(
  sites: Readonly<Record<string, KnownSite>>,
  siteId: string,
): ClinicDetails {
  return {
    name: sites[siteId]?.name ?? unknownSiteName(siteId),
    address: ADDRESS_NOT_ON_TABLET,
  };
}
