// A letter layout as plain text: the e-mail body that travels with the PDF, and a readable form
// for tests and previews.
import type { LetterBlock, LetterLayout } from './letter-layout';

function blockText(block: LetterBlock): string[] {
  switch (block.type) {
    case 'heading':
      return ['', block.text.toUpperCase()];
    case 'paragraph':
      return [block.text];
    case 'notice':
      return [`! ${block.text}`];
    case 'list':
      return block.items.map((item) => `  • ${item}`);
    case 'interpretation':
      return [block.label + ':', ...block.items.map((item) => `  • ${item}`)];
    case 'findings':
      return block.rows.map(
        (row) =>
          `  ${row.label}: ${row.current}${row.previous !== null ? ` (previously ${row.previous})` : ''}`,
      );
    case 'trend':
      return [block.title + ':', ...block.points.map((p) => `  ${p.label}: ${p.valueText}`)];
  }
}

export function letterPlainText(layout: LetterLayout): string {
  const lines: string[] = [
    layout.letterhead.clinicName,
    ...layout.letterhead.addressLines,
    '',
    layout.dateLine,
    ...(layout.recipient ? [layout.recipient.name, ...layout.recipient.lines] : []),
    '',
    ...layout.identifiers.map((id) => `${id.label}: ${id.value}`),
    '',
    layout.title,
    '',
  ];
  for (const block of layout.blocks) lines.push(...blockText(block));
  if (layout.signature) {
    lines.push('', layout.signature.name, layout.signature.role, layout.signature.statusLine);
  }
  lines.push('', layout.caution);
  return lines.join('\n');
}
