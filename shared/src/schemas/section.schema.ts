// Fields every examination section carries: where it belongs (site, visit, patient) so the server
// can scope it, and why it was not done when it was skipped.
import { id, skippedReason } from './field-types.schema';

export const scopeShape = {
  siteId: id('Site'),
} as const;

export const sectionShape = {
  siteId: id('Site'),
  visitId: id('Visit'),
  patientId: id('Patient'),
  skippedReason: skippedReason.nullish(),
} as const;

/** Keys that place a section; set by the caller, never by a form's defaults. */
export const SECTION_PLACEMENT_KEYS = ['siteId', 'visitId', 'patientId'] as const;
export type SectionPlacementKey = (typeof SECTION_PLACEMENT_KEYS)[number];
