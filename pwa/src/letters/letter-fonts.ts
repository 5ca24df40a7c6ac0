// Lato (SIL Open Font License, see shared/src/letters/fonts/OFL.txt) inlined into the letters chunk at build time: the
// service worker precaches JavaScript, so letters render offline without a font request.
import latoBoldDataUrl from '@fuselight/shared/letters/fonts/Lato-Bold.ttf?inline';
import latoRegularDataUrl from '@fuselight/shared/letters/fonts/Lato-Regular.ttf?inline';
import type { LetterFonts } from '@fuselight/shared/letter-pdf';

function bytesOfDataUrl(dataUrl: string): Uint8Array {
  const base64 = dataUrl.slice(dataUrl.indexOf(',') + 1);
  const binary = atob(base64);
  const bytes = new Uint8Array(binary.length);
  for (let i = 0; i < binary.length; i += 1) bytes[i] = binary.charCodeAt(i);
  return bytes;
}

let cached: LetterFonts | null = null;

export function letterFonts(): LetterFonts {
  cached ??= { regular: bytesOfDataUrl(latoRegularDataUrl), bold: bytesOfDataUrl(latoBoldDataUrl) };
  return cached;
}
