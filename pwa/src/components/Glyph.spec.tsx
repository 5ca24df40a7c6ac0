import { render } from '@testing-library/react';
import { calendarOutline, cloudDoneOutline } from 'ionicons/icons';
import { describe, expect, it } from 'vitest';
import { Glyph } from './Glyph';

describe('Glyph', () => {
  it("draws the ionicons package's SVG inline, hidden from assistive technology", () => {
    const { container } = render(<Glyph icon={calendarOutline} data-look="ok" />);
    const glyph = container.firstElementChild as HTMLElement;
    expect(glyph.getAttribute('aria-hidden')).toBe('true');
    expect(glyph.className).toBe('fl-glyph');
    expect(glyph.dataset.look).toBe('ok');
    const svg = glyph.querySelector('svg');
    expect(svg?.getAttribute('viewBox')).toBe('0 0 512 512');
    // The calendar's outline and its day dots, as the package draws them.
    expect(svg?.querySelectorAll('circle')).toHaveLength(9);
    expect(svg?.querySelector('.ionicon-stroke-width')).not.toBeNull();
    expect(container.querySelector('ion-icon')).toBeNull();
  });

  it('keeps the class it is given beside its own', () => {
    const { container } = render(<Glyph icon={cloudDoneOutline} className="fl-tab-glyph" />);
    expect(container.firstElementChild?.className).toBe('fl-glyph fl-tab-glyph');
  });

  it('refuses anything but an SVG data: URL', () => {
    expect(() => render(<Glyph icon="data:text/html;utf8,<script>x</script>" />)).toThrow(
      /an SVG data: URL/,
    );
    expect(() => render(<Glyph icon="https://example.org/icon.svg" />)).toThrow(/an SVG data: URL/);
  });
});
