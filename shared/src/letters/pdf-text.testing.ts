// Reads the text back out of a PDF with pdfjs-dist, for tests on either end: proves what a reader
// would see, not just what was passed to pdf-lib. Imported as `@fuselight/shared/pdf-text-testing`
// by test files only, so pdfjs stays out of every bundle.
import { getDocument } from 'pdfjs-dist/legacy/build/pdf.mjs';

export interface PdfText {
  pages: string[];
  all: string;
}

export async function pdfText(bytes: Uint8Array): Promise<PdfText> {
  const doc = await getDocument({
    data: new Uint8Array(bytes),
    useSystemFonts: false,
    verbosity: 0,
  }).promise;
  const pages: string[] = [];
  for (let n = 1; n <= doc.numPages; n += 1) {
    const page = await doc.getPage(n);
    const content = await page.getTextContent();
    let text = '';
    for (const item of content.items) {
      if ('str' in item) text += item.str + (item.hasEOL ? '\n' : ' ');
    }
    pages.push(text.replace(/[ \t]+/g, ' '));
  }
  await doc.destroy();
  return { pages, all: pages.join('\n') };
}
