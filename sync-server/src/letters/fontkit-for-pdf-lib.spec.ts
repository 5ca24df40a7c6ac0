// shared's fontkit 2 adapter (shared/src/letters/fontkit-for-pdf-lib.ts) against pdf-lib: a subset of Lato embedded by pdf-lib must hold the glyphs
// of what was drawn, with the original font's widths. The reference is fontkit itself (npm) reading
// the unsubset Lato file, and pdf-lib (npm) reading the saved PDF back.
import { create, type Font } from 'fontkit';
import { PDFDocument, PDFName, PDFRawStream, PDFDict, decodePDFRawStream } from 'pdf-lib';
import { describe, expect, it } from 'vitest';
import { fontkitForPdfLib } from '@fuselight/shared/letter-pdf';
import { letterFonts } from './letter-fonts';

const LATO = letterFonts().regular;
// Names and signs a clinic letter carries beyond Latin-1: Polish and Czech letters, the prism
// dioptre sign (Δ) and the degree sign.
const TEXT = 'Łucja Żółć, Řehoř Šťastný: exo 8.0° (14.1Δ)';

describe('fontkit 2 for pdf-lib', () => {
  it('embeds a subset of Lato that holds every drawn character with its original width', async () => {
    const doc = await PDFDocument.create();
    doc.registerFontkit(fontkitForPdfLib);
    const font = await doc.embedFont(LATO, { subset: true });
    doc.addPage().drawText(TEXT, { font, size: 12, x: 40, y: 700 });
    const saved = await PDFDocument.load(await doc.save());

    // The font file the font descriptor points to (/FontFile2: TrueType).
    const fontFiles = saved.context
      .enumerateIndirectObjects()
      .map(([, object]) => object)
      .filter((object): object is PDFDict => object instanceof PDFDict)
      .map((dict) => dict.get(PDFName.of('FontFile2')))
      .filter((ref) => ref !== undefined)
      .map((ref) => saved.context.lookup(ref))
      .filter((object): object is PDFRawStream => object instanceof PDFRawStream);
    expect(fontFiles).toHaveLength(1);
    const subset = create(Buffer.from(decodePDFRawStream(fontFiles[0]!).decode())) as Font;
    const original = create(Buffer.from(LATO)) as Font;

    // The subset keeps only what was drawn (plus .notdef), far fewer glyphs than Lato has.
    expect(subset.numGlyphs).toBeLessThan(original.numGlyphs / 10);
    const drawn = original.layout(TEXT).glyphs;
    const kept = new Set<number>();
    for (let id = 0; id < subset.numGlyphs; id += 1) kept.add(subset.getGlyph(id).advanceWidth);
    for (const glyph of drawn) {
      expect(glyph.id, `Lato has a glyph for ${glyph.codePoints.join(',')}`).not.toBe(0);
      expect(kept.has(glyph.advanceWidth)).toBe(true);
    }
    // pdf-lib measured the text with the adapter's font: the same width fontkit gives.
    const width = drawn.reduce((sum, g) => sum + g.advanceWidth, 0);
    expect(font.widthOfTextAtSize(TEXT, 1000)).toBeCloseTo((width * 1000) / original.unitsPerEm, 3);
  });
});
