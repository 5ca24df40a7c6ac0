// The letterhead of a visit's letters on the tablet: the name and address of the visit's site as
// the tablet last heard them from GET /api/me/sites (kept in the auth database, so they are there
// offline). Before the tablet has heard a site's address (or when the site has none), the preview
// says so on the address line instead of leaving a gap; the letter the clinic server e-mails
// prints the address from the site's settings either way.
import type { ClinicDetails } from '@fuselight/shared';
import type { KnownSite } from '../../auth/auth-db';

/** No commas: the letterhead splits an address into lines at commas and newlines. */
export const ADDRESS_NOT_ON_TABLET =
  'Site address not on this tablet yet (the letter the clinic server sends prints it)';

export function unknownSiteName(siteId: string): string {
  return `Clinic site …${siteId.slice(-6)} (name not synced to this tablet yet)`;
}

export function clinicForLetters(
  sites: Readonly<Record<string, KnownSite>>,
  siteId: string,
): ClinicDetails {
  return {
    name: sites[siteId]?.name ?? unknownSiteName(siteId),
    address: sites[siteId]?.address?.trim() || ADDRESS_NOT_ON_TABLET,
  };
}
