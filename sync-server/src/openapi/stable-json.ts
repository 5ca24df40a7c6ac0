/** JSON with object keys sorted, so a regenerated document diffs cleanly. */
export function stableJson(value: unknown): string {
  return JSON.stringify(
    value,
    (_key, v: unknown) =>
      v && typeof v === 'object' && !Array.isArray(v)
        ? Object.fromEntries(
            Object.entries(v as Record<string, unknown>).sort(([a], [b]) => a.localeCompare(b)),
          )
        : v,
    2,
  );
}
