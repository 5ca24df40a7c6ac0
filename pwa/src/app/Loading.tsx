// What a screen shows while its code or the tablet's session loads: a plain spinner (CSS only,
// no Ionic), so the signed-out shell can show it before Ionic is loaded.
export function Loading() {
  return (
    <div role="status" aria-live="polite" className="fl-loading">
      <span className="fl-spinner" aria-hidden="true" />
      <span className="fl-muted">Loading…</span>
    </div>
  );
}
