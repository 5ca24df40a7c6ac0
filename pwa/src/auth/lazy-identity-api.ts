// The session store's IdentityApi, loaded at its first call. The identity routes check every
// answer with the shared zod schemas; the signed-out shell's first screen needs none of that
// until someone presses Sign in (or the tablet's first heartbeat), so the schemas and zod load
// then, not with the first screen (bench:bundle). Every IdentityApi method returns a promise,
// so a call waits for the module and then runs on the one real instance.
import type { IdentityApi, IdentityApiOptions } from './identity-api';

export function lazyIdentityApi(options: IdentityApiOptions = {}): IdentityApi {
  let real: Promise<IdentityApi> | null = null;
  const load = () =>
    (real ??= import('./identity-api').then((module) => new module.IdentityApi(options)));
  return new Proxy({} as IdentityApi, {
    get(_target, name) {
      if (typeof name !== 'string' || name === 'then') return undefined;
      return async (...args: unknown[]) => {
        const api = await load();
        const method = (api as unknown as Record<string, (...a: unknown[]) => unknown>)[name];
        if (typeof method !== 'function') {
          throw new TypeError(`IdentityApi has no method ${name}`);
        }
        return method.apply(api, args);
      };
    },
  });
}
