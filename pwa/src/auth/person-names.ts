// How a person is named on screen: "you" for whoever is signed in, a colleague's name from
// GET /api/me/colleagues (cached in the auth database, so known offline), or, for someone the
// tablet has not heard of yet (another site's supervisor, a first start offline), a stand-in
// with the end of their id so two such people can still be told apart.
import type { KnownColleague } from './auth-db';

export function personLabel(
  colleagues: Readonly<Record<string, KnownColleague>>,
  id: string | null | undefined,
  signedInId: string | null | undefined,
): string {
  if (!id) return 'unknown';
  if (signedInId && id === signedInId) return 'you';
  const known = colleagues[id];
  if (known) return known.name;
  return `a colleague not yet known to this tablet (…${id.slice(-6)})`;
}
