// A JWT's expiry, read on the tablet to refresh in time (the server verifies the token).

/** Epoch ms of a JWT's `exp`, read without verifying (the server verifies); null if unreadable. */
export function tokenExpiry(token: string): number | null {
  const payload = token.split('.')[1];
  if (!payload) return null;
  try {
    const json = atob(payload.replace(/-/g, '+').replace(/_/g, '/'));
    const { exp } = JSON.parse(json) as { exp?: unknown };
    return typeof exp === 'number' ? exp * 1000 : null;
  } catch {
    return null;
  }
}
