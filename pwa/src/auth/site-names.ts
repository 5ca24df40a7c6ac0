// How a site is named on screen: its name from GET /api/me/sites (cached in the auth database),
// or, before the tablet has ever fetched it, a numbered stand-in with the end of its id.
import type { KnownSite } from './auth-db';

export function siteLabel(
  sites: Readonly<Record<string, KnownSite>>,
  siteId: string,
  index: number,
): string {
  const site = sites[siteId];
  if (site) return site.name;
  return `Site ${index + 1} (${siteId.slice(-6)})`;
}
