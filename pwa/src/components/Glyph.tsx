// An icon of the ionicons set drawn as inline SVG, for the parts every screen shows (the tab bar,
// the sync indicator). Ionic's <ion-icon> parses each icon into an HTML document of its own and
// renders it in a shadow root: on a slow tablet, the tab bar's and the sync indicator's icons
// alone made the first screen's longest task longer. The icons are the ionicons package's own
// constants (data: URLs of SVG markup written by its authors), never user input, so their markup
// is set as it is. Decorative: hidden from assistive technology, like the ion-icons it replaces.
import './glyph.css';

const markup = new Map<string, { __html: string }>();

function svgOf(icon: string): { __html: string } {
  let html = markup.get(icon);
  if (!html) {
    const svg = icon.slice(icon.indexOf(',') + 1);
    if (!icon.startsWith('data:image/svg+xml') || !svg.startsWith('<svg')) {
      throw new Error('Glyph takes an icon of the ionicons package (an SVG data: URL)');
    }
    html = { __html: svg };
    markup.set(icon, html);
  }
  return html;
}

export function Glyph({
  icon,
  className,
  ...data
}: {
  icon: string;
  className?: string;
  [dataAttribute: `data-${string}`]: string;
}) {
  return (
    <span
      {...data}
      className={className ? `fl-glyph ${className}` : 'fl-glyph'}
      aria-hidden="true"
      dangerouslySetInnerHTML={svgOf(icon)}
    />
  );
}
