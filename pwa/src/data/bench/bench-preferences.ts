// The Bench's display settings on this tablet: which conversion labels Δ beside degrees. It is a
// clinic setting in the long run; until settings sync exists it is kept per tablet.
import type { ConversionMethod } from '@fuselight/shared';

const KEY = 'fuselight.bench.conversion';

export function readConversionPreference(): ConversionMethod {
  try {
    return globalThis.localStorage?.getItem(KEY) === 'rule of thumb' ? 'rule of thumb' : 'exact';
  } catch {
    return 'exact';
  }
}

export function writeConversionPreference(method: ConversionMethod): void {
  try {
    globalThis.localStorage?.setItem(KEY, method);
  } catch {
    // A private window may refuse storage; the choice then lasts until the page closes.
  }
}
