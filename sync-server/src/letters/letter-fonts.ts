// Lato (SIL Open Font License, see shared/src/letters/fonts/OFL.txt) inlined into the server bundle at build time, so
// the renderer needs no file path at run time.
import latoBoldDataUrl from '@fuselight/shared/letters/fonts/Lato-Bold.ttf?inline';
import latoRegularDataUrl from '@fuselight/shared/letters/fonts/Lato-Regular.ttf?inline';
import type { LetterFonts } from '@fuselight/shared/letter-pdf';

function bytesOfDataUrl(dataUrl: string): Uint8Array {
  const comma = dataUrl.indexOf(',');
  return new Uint8Array(Buffer.from(dataUrl.slice(comma + 1), 'base64'));
}

let cached: LetterFonts | null = null;

export function letterFonts(): LetterFonts {
  cached ??= { regular: bytesOfDataUrl(latoRegularDataUrl), bold: bytesOfDataUrl(latoBoldDataUrl) };
  return cached;
}
