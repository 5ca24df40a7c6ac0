// The server's check on a pushed visit change: the hospital record fields are the FHIR hand-off's
// (docs/fhir.md), written by the server alone. The sync push planner calls it for collection
// `visit` with the fields the change would change; a non-null answer rejects the change.
export const HOSPITAL_RECORD_FIELDS = [
  'hospitalRecordState',
  'hospitalRecordAt',
  'hospitalRecordNote',
] as const;

export function visitPushProblem(
  storedFields: Readonly<Record<string, unknown>> | null | undefined,
  changedFields: Readonly<Record<string, unknown>>,
): string | null {
  // A null for a field the record does not hold changes nothing (a form sending every field).
  const written = HOSPITAL_RECORD_FIELDS.filter(
    (field) =>
      Object.hasOwn(changedFields, field) &&
      (changedFields[field] !== null || (storedFields?.[field] ?? null) !== null),
  );
  if (written.length === 0) return null;
  return written
    .map(
      (field) =>
        `fields.${field}: the hospital record's state is written by the clinic server's hand-off, never by a tablet`,
    )
    .join('; ');
}
