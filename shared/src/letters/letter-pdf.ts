// Draws a letter layout onto A4 pages with pdf-lib, Lato embedded. Pure: layout and font bytes
// in, PDF bytes out, so the tablet (offline) and the server (for e-mail) run this same code; each
// end supplies the font bytes (shared/src/letters/fonts, SIL Open Font License). The design is
// Fuselight's own: a teal letterhead band, an identifier strip, a three-column findings table,
// boxed interpretations and a vector trend chart. Imported as `@fuselight/shared/letter-pdf` so
// that pdf-lib stays out of every chunk that does not draw a letter.
import {
  PDFDocument,
  rgb,
  type PDFFont,
  type PDFPage,
  type RGB,
  degrees as rotation,
} from 'pdf-lib';
import { fontkitForPdfLib } from './fontkit-for-pdf-lib';

export { fontkitForPdfLib };
import type { LetterBlock, LetterLayout, TrendPoint } from './index';

export interface LetterFonts {
  regular: Uint8Array;
  bold: Uint8Array;
}

const A4 = { width: 595.28, height: 841.89 };
const MARGIN = 54;
const FOOTER_HEIGHT = 58;
const CONTENT_WIDTH = A4.width - 2 * MARGIN;

const INK = rgb(0.12, 0.16, 0.18);
const MUTED = rgb(0.38, 0.43, 0.46);
const TEAL = rgb(0.122, 0.373, 0.451);
const TEAL_TINT = rgb(0.9, 0.95, 0.96);
const RULE = rgb(0.78, 0.83, 0.85);
const AMBER = rgb(0.72, 0.45, 0.05);
const AMBER_TINT = rgb(1, 0.96, 0.88);

interface Cursor {
  page: PDFPage;
  y: number;
}

class LetterWriter {
  private readonly pages: PDFPage[] = [];
  cursor!: Cursor;

  constructor(
    private readonly doc: PDFDocument,
    readonly regular: PDFFont,
    readonly bold: PDFFont,
    private readonly layout: LetterLayout,
  ) {
    this.newPage();
  }

  newPage(): void {
    const page = this.doc.addPage([A4.width, A4.height]);
    this.pages.push(page);
    this.cursor = { page, y: A4.height - MARGIN };
    if (this.pages.length > 1) {
      this.text(`${this.layout.letterhead.clinicName} · ${this.layout.title}`, {
        size: 8,
        color: MUTED,
      });
      this.cursor.y -= 6;
    }
  }

  /** Starts a new page unless `height` points still fit above the footer. */
  ensure(height: number): void {
    if (this.cursor.y - height < MARGIN + FOOTER_HEIGHT) this.newPage();
  }

  wrap(text: string, font: PDFFont, size: number, width: number): string[] {
    const lines: string[] = [];
    for (const paragraph of text.split('\n')) {
      let line = '';
      for (const word of paragraph.split(/\s+/).filter(Boolean)) {
        const candidate = line ? `${line} ${word}` : word;
        if (font.widthOfTextAtSize(candidate, size) <= width || !line) line = candidate;
        else {
          lines.push(line);
          line = word;
        }
      }
      lines.push(line);
    }
    return lines;
  }

  text(
    text: string,
    {
      size = 10,
      font = this.regular,
      color = INK,
      x = MARGIN,
      width = CONTENT_WIDTH,
      gap = 3,
    } = {},
  ): void {
    for (const line of this.wrap(text, font, size, width)) {
      this.ensure(size + gap);
      this.cursor.y -= size;
      this.cursor.page.drawText(line, { x, y: this.cursor.y, size, font, color });
      this.cursor.y -= gap;
    }
  }

  space(points: number): void {
    this.cursor.y -= points;
  }

  finish(): void {
    const total = this.pages.length;
    this.pages.forEach((page, index) => {
      if (this.layout.status === 'draft') {
        page.drawText('DRAFT', {
          x: 150,
          y: 300,
          size: 110,
          font: this.bold,
          color: rgb(0.93, 0.93, 0.93),
          rotate: rotation(35),
          opacity: 0.6,
        });
      }
      page.drawLine({
        start: { x: MARGIN, y: MARGIN + FOOTER_HEIGHT - 10 },
        end: { x: A4.width - MARGIN, y: MARGIN + FOOTER_HEIGHT - 10 },
        thickness: 0.5,
        color: RULE,
      });
      const cautionLines = this.wrap(this.layout.caution, this.regular, 8, CONTENT_WIDTH);
      let y = MARGIN + FOOTER_HEIGHT - 22;
      for (const line of cautionLines) {
        page.drawText(line, { x: MARGIN, y, size: 8, font: this.regular, color: MUTED });
        y -= 10;
      }
      const pageLabel = `Page ${index + 1} of ${total}`;
      page.drawText(this.layout.footer, {
        x: MARGIN,
        y: MARGIN,
        size: 7,
        font: this.regular,
        color: MUTED,
      });
      page.drawText(pageLabel, {
        x: A4.width - MARGIN - this.regular.widthOfTextAtSize(pageLabel, 7),
        y: MARGIN,
        size: 7,
        font: this.regular,
        color: MUTED,
      });
    });
  }
}

function drawLetterhead(w: LetterWriter, layout: LetterLayout): void {
  const { page } = w.cursor;
  const bandHeight = 62;
  const top = A4.height - MARGIN + 20;
  page.drawRectangle({
    x: MARGIN - 14,
    y: top - bandHeight,
    width: CONTENT_WIDTH + 28,
    height: bandHeight,
    color: TEAL,
  });
  page.drawText(layout.letterhead.clinicName, {
    x: MARGIN,
    y: top - 30,
    size: 18,
    font: w.bold,
    color: rgb(1, 1, 1),
  });
  page.drawText(layout.kind === 'handout' ? 'Exercise handout' : 'Orthoptic clinic letter', {
    x: MARGIN,
    y: top - 48,
    size: 9,
    font: w.regular,
    color: rgb(0.85, 0.93, 0.95),
  });
  let y = top - 20;
  for (const line of layout.letterhead.addressLines) {
    const width = w.regular.widthOfTextAtSize(line, 9);
    page.drawText(line, {
      x: A4.width - MARGIN - width,
      y,
      size: 9,
      font: w.regular,
      color: rgb(1, 1, 1),
    });
    y -= 12;
  }
  w.cursor.y = top - bandHeight - 22;
  const dateWidth = w.regular.widthOfTextAtSize(layout.dateLine, 10);
  page.drawText(layout.dateLine, {
    x: A4.width - MARGIN - dateWidth,
    y: w.cursor.y,
    size: 10,
    font: w.regular,
    color: INK,
  });
  if (layout.recipient) {
    w.cursor.y += 10;
    w.text('To', { size: 8, color: MUTED });
    w.text(layout.recipient.name, { font: w.bold });
    for (const line of layout.recipient.lines) w.text(line);
  } else {
    w.space(6);
  }
  w.space(10);
}

function drawIdentifiers(w: LetterWriter, layout: LetterLayout): void {
  const height = 34;
  w.ensure(height + 8);
  const { page } = w.cursor;
  const top = w.cursor.y;
  page.drawRectangle({
    x: MARGIN,
    y: top - height,
    width: CONTENT_WIDTH,
    height,
    color: TEAL_TINT,
  });
  page.drawRectangle({ x: MARGIN, y: top - height, width: 3, height, color: TEAL });
  const cell = CONTENT_WIDTH / Math.max(1, layout.identifiers.length);
  layout.identifiers.forEach((id, i) => {
    const x = MARGIN + 12 + i * cell;
    page.drawText(id.label, { x, y: top - 13, size: 7.5, font: w.regular, color: MUTED });
    page.drawText(id.value, { x, y: top - 26, size: 10.5, font: w.bold, color: INK });
  });
  w.cursor.y = top - height - 14;
  w.text(layout.title, { size: 13, font: w.bold, color: INK, gap: 4 });
  w.space(6);
}

function drawFindings(w: LetterWriter, block: Extract<LetterBlock, { type: 'findings' }>): void {
  const widths = [CONTENT_WIDTH * 0.3, CONTENT_WIDTH * 0.35, CONTENT_WIDTH * 0.35];
  const pad = 5;
  const size = 9;
  const drawRow = (cells: readonly string[], header: boolean) => {
    const font = header ? w.bold : w.regular;
    const wrapped = cells.map((cell, i) =>
      w.wrap(cell, i === 0 && !header ? w.bold : font, size, widths[i]! - 2 * pad),
    );
    const lines = Math.max(...wrapped.map((c) => c.length));
    const height = lines * (size + 3) + 2 * pad;
    w.ensure(height);
    const { page } = w.cursor;
    const top = w.cursor.y;
    if (header)
      page.drawRectangle({
        x: MARGIN,
        y: top - height,
        width: CONTENT_WIDTH,
        height,
        color: TEAL_TINT,
      });
    let x = MARGIN;
    wrapped.forEach((cellLines, i) => {
      let y = top - pad - size;
      for (const line of cellLines) {
        page.drawText(line, {
          x: x + pad,
          y,
          size,
          font: i === 0 || header ? w.bold : w.regular,
          color: i === 2 && !header ? MUTED : INK,
        });
        y -= size + 3;
      }
      x += widths[i]!;
    });
    page.drawLine({
      start: { x: MARGIN, y: top - height },
      end: { x: MARGIN + CONTENT_WIDTH, y: top - height },
      thickness: 0.5,
      color: RULE,
    });
    w.cursor.y = top - height;
  };
  const hasPrevious = block.rows.some((row) => row.previous !== null);
  drawRow(hasPrevious ? block.columns : [block.columns[0], block.columns[1], ''], true);
  for (const row of block.rows) drawRow([row.label, row.current, row.previous ?? ''], false);
  w.space(10);
}

function drawBoxed(
  w: LetterWriter,
  label: string | null,
  items: readonly string[],
  accent: RGB,
  tint: RGB,
): void {
  const size = 9.5;
  const inner = CONTENT_WIDTH - 24;
  const labelLines = label ? w.wrap(label, w.bold, 8.5, inner) : [];
  const itemLines = items.map((item) => w.wrap(item, w.regular, size, inner - 10));
  const height =
    16 +
    labelLines.length * 11.5 +
    itemLines.reduce((sum, lines) => sum + lines.length * (size + 3) + 3, 0);
  w.ensure(Math.min(height, 300));
  const { page } = w.cursor;
  const top = w.cursor.y;
  page.drawRectangle({ x: MARGIN, y: top - height, width: CONTENT_WIDTH, height, color: tint });
  page.drawRectangle({ x: MARGIN, y: top - height, width: 3, height, color: accent });
  let y = top - 8;
  for (const line of labelLines) {
    y -= 8.5;
    page.drawText(line, { x: MARGIN + 12, y, size: 8.5, font: w.bold, color: accent });
    y -= 3;
  }
  for (const lines of itemLines) {
    y -= 3;
    lines.forEach((line, i) => {
      y -= size;
      if (i === 0 && items.length > 1)
        page.drawText('•', { x: MARGIN + 12, y, size, font: w.regular, color: INK });
      page.drawText(line, {
        x: MARGIN + (items.length > 1 ? 22 : 12),
        y,
        size,
        font: w.regular,
        color: INK,
      });
      y -= 3;
    });
  }
  w.cursor.y = top - height - 10;
}

function niceStep(range: number): number {
  const raw = range / 4;
  const power = 10 ** Math.floor(Math.log10(raw || 1));
  const scaled = raw / power;
  return (scaled <= 1 ? 1 : scaled <= 2 ? 2 : scaled <= 5 ? 5 : 10) * power;
}

function drawTrend(w: LetterWriter, block: Extract<LetterBlock, { type: 'trend' }>): void {
  const chartHeight = 120;
  w.ensure(chartHeight + 40);
  w.text(block.title, { size: 9, font: w.bold, color: MUTED });
  const { page } = w.cursor;
  const top = w.cursor.y - 6;
  const left = MARGIN + 34;
  const right = MARGIN + CONTENT_WIDTH * 0.62;
  const bottom = top - chartHeight;
  const values = block.points.map((p) => p.value);
  let lo = Math.min(0, ...values);
  let hi = Math.max(0, ...values);
  const step = niceStep(hi - lo || 1);
  lo = Math.floor(lo / step) * step;
  hi = Math.ceil(hi / step) * step;
  if (hi === lo) hi = lo + step;
  const yOf = (v: number) => bottom + ((v - lo) / (hi - lo)) * chartHeight;
  const xOf = (i: number) =>
    block.points.length === 1
      ? (left + right) / 2
      : left + 10 + (i / (block.points.length - 1)) * (right - left - 20);
  for (let v = lo; v <= hi + step / 2; v += step) {
    const y = yOf(v);
    page.drawLine({
      start: { x: left, y },
      end: { x: right, y },
      thickness: v === 0 ? 0.9 : 0.4,
      color: v === 0 ? MUTED : RULE,
    });
    const label = `${v > 0 ? '+' : ''}${Number(v.toFixed(2))}${block.unit}`;
    page.drawText(label, {
      x: left - 6 - w.regular.widthOfTextAtSize(label, 7),
      y: y - 2.5,
      size: 7,
      font: w.regular,
      color: MUTED,
    });
  }
  page.drawLine({
    start: { x: left, y: bottom },
    end: { x: left, y: top },
    thickness: 0.6,
    color: MUTED,
  });
  block.points.forEach((point: TrendPoint, i) => {
    const x = xOf(i);
    const y = yOf(point.value);
    if (i > 0) {
      const prev = block.points[i - 1]!;
      page.drawLine({
        start: { x: xOf(i - 1), y: yOf(prev.value) },
        end: { x, y },
        thickness: 1.6,
        color: TEAL,
      });
    }
    page.drawCircle({ x, y, size: 3, color: TEAL, borderColor: rgb(1, 1, 1), borderWidth: 0.8 });
    const dateWidth = w.regular.widthOfTextAtSize(point.label, 7);
    page.drawText(point.label, {
      x: x - dateWidth / 2,
      y: bottom - 11,
      size: 7,
      font: w.regular,
      color: MUTED,
    });
  });
  // The values in words, both units, beside the chart.
  let y = top - 4;
  const legendX = right + 16;
  for (const point of block.points) {
    page.drawText(point.label, { x: legendX, y, size: 7.5, font: w.bold, color: MUTED });
    y -= 10;
    for (const line of w.wrap(point.valueText, w.regular, 8.5, A4.width - MARGIN - legendX)) {
      page.drawText(line, { x: legendX, y, size: 8.5, font: w.regular, color: INK });
      y -= 11;
    }
    y -= 4;
  }
  w.cursor.y = Math.min(bottom - 22, y);
}

/** Room a heading needs below it so it never stands alone at the foot of a page. */
function keepWithNext(next: LetterBlock | undefined): number {
  if (!next) return 40;
  if (next.type === 'trend') return 200;
  if (next.type === 'findings' || next.type === 'interpretation') return 90;
  return 60;
}

function drawBlock(w: LetterWriter, block: LetterBlock, next: LetterBlock | undefined): void {
  switch (block.type) {
    case 'heading':
      w.ensure(keepWithNext(next));
      w.space(6);
      w.text(block.text, { size: 11.5, font: w.bold, color: TEAL, gap: 5 });
      return;
    case 'paragraph':
      w.text(block.text, { size: 10, gap: 4 });
      w.space(5);
      return;
    case 'list':
      for (const item of block.items) {
        const lines = w.wrap(item, w.regular, 10, CONTENT_WIDTH - 16);
        lines.forEach((line, i) => {
          w.ensure(14);
          w.cursor.y -= 10;
          if (i === 0)
            w.cursor.page.drawText('•', {
              x: MARGIN + 4,
              y: w.cursor.y,
              size: 10,
              font: w.bold,
              color: TEAL,
            });
          w.cursor.page.drawText(line, {
            x: MARGIN + 16,
            y: w.cursor.y,
            size: 10,
            font: w.regular,
            color: INK,
          });
          w.cursor.y -= 4;
        });
      }
      w.space(5);
      return;
    case 'findings':
      drawFindings(w, block);
      return;
    case 'interpretation':
      drawBoxed(w, block.label, block.items, TEAL, TEAL_TINT);
      return;
    case 'notice':
      drawBoxed(w, null, [block.text], AMBER, AMBER_TINT);
      return;
    case 'trend':
      drawTrend(w, block);
      return;
  }
}

function drawSignature(w: LetterWriter, layout: LetterLayout): void {
  if (!layout.signature) return;
  w.ensure(70);
  w.space(12);
  w.text('Yours sincerely,', { size: 10 });
  w.space(18);
  const { page } = w.cursor;
  page.drawLine({
    start: { x: MARGIN, y: w.cursor.y },
    end: { x: MARGIN + 180, y: w.cursor.y },
    thickness: 0.6,
    color: MUTED,
  });
  w.space(4);
  w.text(layout.signature.name, { size: 10.5, font: w.bold });
  w.text(layout.signature.role, { size: 9, color: MUTED });
  w.text(layout.signature.statusLine, { size: 9, color: layout.status === 'final' ? TEAL : AMBER });
}

/** The letter as PDF bytes. Fonts are subset, so a letter stays small. */
export async function renderLetterPdf(
  layout: LetterLayout,
  fonts: LetterFonts,
): Promise<Uint8Array> {
  const doc = await PDFDocument.create();
  doc.registerFontkit(fontkitForPdfLib);
  doc.setTitle(layout.title);
  doc.setSubject(layout.kind === 'handout' ? 'Exercise handout' : 'Orthoptic clinic letter');
  doc.setProducer('Fuselight');
  doc.setCreator('Fuselight');
  const regular = await doc.embedFont(fonts.regular, { subset: true });
  const bold = await doc.embedFont(fonts.bold, { subset: true });
  const w = new LetterWriter(doc, regular, bold, layout);
  drawLetterhead(w, layout);
  drawIdentifiers(w, layout);
  layout.blocks.forEach((block, i) => drawBlock(w, block, layout.blocks[i + 1]));
  drawSignature(w, layout);
  w.finish();
  // Plain objects rather than object streams: older mail clients' viewers read them.
  return doc.save({ useObjectStreams: false });
}
