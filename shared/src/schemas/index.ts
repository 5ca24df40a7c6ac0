// Record schemas, their registry and validation, and the sync, identity and admin wire schemas.
// The field builders stay internal; screens read labels and units through `fieldMeta`.
export {
  type FieldKind,
  type FieldMeta,
  type FieldOption,
  type FieldUnit,
  type BsvResult,
  BSV_RESULTS,
  describeRange,
  fieldMetaRegistry,
} from './field-types.schema';
export { SECTION_PLACEMENT_KEYS, type SectionPlacementKey } from './section.schema';
export * from './patient.schema';
export * from './visit.schema';
export * from './amblyoscope.schema';
export * from './acuity.schema';
export * from './cover-test.schema';
export * from './near-vision.schema';
export * from './motility.schema';
export * from './plan.schema';
export * from './attachment.schema';
export * from './letter.schema';
export * from './addendum.schema';
export * from './registry';
export * from './sync-wire.schema';
export * from './identity.schema';
export * from './admin-views.schema';
export * from './review-views';
export * from './section-records';
export * from './clinic-settings.schema';
