// Looking for a new version of the app on the clinic server. The service worker finds one by
// itself when the app opens; a tablet that has received records from a newer build looks at
// once, so the offer to update (UpdatePrompt) comes without waiting for the next start.

export type UpdateCheck = 'looked' | 'offline' | 'no-service-worker' | 'failed';

/** Asks the service worker registration to fetch the app's script again and compare. */
export async function lookForAppUpdate(
  container: ServiceWorkerContainer | undefined = globalThis.navigator?.serviceWorker,
  online: () => boolean = () => globalThis.navigator?.onLine !== false,
): Promise<UpdateCheck> {
  if (!container) return 'no-service-worker';
  if (!online()) return 'offline';
  try {
    const registration = await container.getRegistration();
    if (!registration) return 'no-service-worker';
    await registration.update();
    return 'looked';
  } catch {
    return 'failed';
  }
}

/** The result of a look, in words for the You screen. */
export function describeUpdateCheck(check: UpdateCheck): string {
  switch (check) {
    case 'looked':
      return 'Looked for the new version. When it has downloaded, Fuselight offers to update at the bottom of the screen.';
    case 'offline':
      return 'Offline: the new version is looked for when the network returns.';
    case 'no-service-worker':
      return 'This browser has not installed Fuselight as an app; reload the page to get the new version.';
    case 'failed':
      return 'The clinic server could not be reached to look for the new version; it is looked for again when the app next opens.';
  }
}
