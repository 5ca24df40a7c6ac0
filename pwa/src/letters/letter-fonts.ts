// Lato (SIL Open Font License, see shared/src/letters/fonts/OFL.txt) for letters drawn on the
// tablet. The two font files are assets of their own, fetched only when a letter is first drawn
// (they are most of a letter's weight), and precached by the service worker so that letters
// render offline too (vite.config.ts).
import latoBoldUrl from '@fuselight/shared/letters/fonts/Lato-Bold.ttf?url';
import latoRegularUrl from '@fuselight/shared/letters/fonts/Lato-Regular.ttf?url';
import type { LetterFonts } from '@fuselight/shared/letter-pdf';

/** Reads one font file's bytes. */
export type FontFetch = (url: string) => Promise<Uint8Array>;

async function fetchFontBytes(url: string): Promise<Uint8Array> {
  const response = await fetch(url);
  if (!response.ok) {
    throw new Error(
      `The letter font could not be loaded (${response.status} for ${url}); reload the app while connected and try again`,
    );
  }
  return new Uint8Array(await response.arrayBuffer());
}

let loading: Promise<LetterFonts> | null = null;

/** The letter fonts, fetched once per page; a failed fetch is tried again on the next call. */
export function letterFonts(fetchFont: FontFetch = fetchFontBytes): Promise<LetterFonts> {
  loading ??= Promise.all([fetchFont(latoRegularUrl), fetchFont(latoBoldUrl)]).then(
    ([regular, bold]) => ({ regular, bold }),
    (error: unknown) => {
      loading = null;
      throw error;
    },
  );
  return loading;
}

/** The font files' addresses, as the build names them. */
export const LETTER_FONT_URLS = { regular: latoRegularUrl, bold: latoBoldUrl } as const;
