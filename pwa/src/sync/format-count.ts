// A count for the screen, its digits grouped in threes with commas ("12,345"), as English
// writes them. Written out rather than through Number.prototype.toLocaleString: the first
// Intl number format a page asks for loads its locale data, a task of 40 ms on the benchmark's
// machine (160 ms on a tablet four times slower) on the first sync progress drawn after start.
export function formatCount(count: number): string {
  if (!Number.isSafeInteger(count)) return String(count);
  const digits = String(Math.abs(count));
  const grouped = digits.replace(/\B(?=(\d{3})+$)/g, ',');
  return count < 0 ? `-${grouped}` : grouped;
}
