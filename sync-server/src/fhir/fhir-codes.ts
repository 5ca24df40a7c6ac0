// The codes and units of the FHIR export (docs/fhir.md): published systems where the export can
// name a source for a code (SNOMED CT for distance and near acuity and the eye, FHIR R4's own code
// systems for categories, signatures and encounter class), otherwise a concept of Fuselight's own
// CodeSystem, whose concepts are the recorded fields (collection.field), their answers, the
// computed interpretations and a skipped Section. Units are UCUM codes.
import type { Coding } from 'fhir/r4';
import {
  COLLECTION_LABELS,
  fieldMeta,
  SECTION_COLLECTIONS,
  SECTION_PLACEMENT_KEYS,
  type FieldMeta,
  type FieldUnit,
  type SectionCollectionName,
} from '@fuselight/shared';

/** Fuselight's own CodeSystem: a stable URI, its concepts listed in docs/fhir.md. */
export const FUSELIGHT_CODE_SYSTEM = 'https://fuselight.app/fhir/CodeSystem/orthoptics';
export const SNOMED_CT = 'http://snomed.info/sct';
export const LOINC = 'http://loinc.org';
export const UCUM = 'http://unitsofmeasure.org';
export const OBSERVATION_CATEGORY = 'http://terminology.hl7.org/CodeSystem/observation-category';
export const DATA_ABSENT_REASON = 'http://terminology.hl7.org/CodeSystem/data-absent-reason';
export const ACT_CODE = 'http://terminology.hl7.org/CodeSystem/v3-ActCode';
export const PROVENANCE_PARTICIPANT =
  'http://terminology.hl7.org/CodeSystem/provenance-participant-type';
export const DATA_OPERATION = 'http://terminology.hl7.org/CodeSystem/v3-DataOperation';
export const SIGNATURE_TYPE = 'urn:iso-astm:E1762-95:2013';

/** The system of a site's clinic numbers: one URI per site. */
export function clinicNumberSystem(siteId: string): string {
  return `https://fuselight.app/fhir/NamingSystem/clinic-number/${siteId}`;
}

/**
 * SNOMED CT concepts of the visual acuity value set of HL7's Eye Care implementation guide (and
 * its target sites); the sources are named beside each in fhir-codes.spec.ts.
 */
export const SNOMED = {
  distanceVisualAcuity: { code: '251739003', display: 'Distance visual acuity' },
  nearVisualAcuity: { code: '251743004', display: 'Near visual acuity' },
  rightEye: { code: '362502000', display: 'Entire right eye' },
  leftEye: { code: '362503005', display: 'Entire left eye' },
} as const;

/**
 * LOINC terms for uncorrected acuity of one eye (quantitative, length ratio), each read from a
 * stored LOINC page named beside it in fhir-codes.spec.ts. Where no far- or near-specific term
 * could be verified, the eye-specific term without distance is used (the SNOMED CT code beside
 * it says distance or near). Corrected and pinhole acuity carry no LOINC code: LOINC's terms say
 * "best corrected", which a reading with the patient's own correction is not.
 */
export const LOINC_UNCORRECTED_ACUITY: Record<string, { code: string; display: string }> = {
  rightDistanceUncorrectedLogMar: {
    code: '98505-1',
    display: 'Visual acuity far uncorrected Right eye',
  },
  leftDistanceUncorrectedLogMar: { code: '98498-9', display: 'Visual acuity uncorrected Left eye' },
  rightNearUncorrectedLogMar: { code: '98499-7', display: 'Visual acuity uncorrected Right eye' },
  leftNearUncorrectedLogMar: {
    code: '98501-0',
    display: 'Visual acuity near uncorrected Left eye',
  },
};

export const loinc = (concept: { code: string; display: string }): Coding => ({
  system: LOINC,
  ...concept,
});

export const snomed = (concept: { code: string; display: string }): Coding => ({
  system: SNOMED_CT,
  ...concept,
});

/** A UCUM quantity's unit text and code for each unit a field is stored in. */
export const UCUM_UNITS: Record<FieldUnit, { unit: string; code: string } | null> = {
  '°': { unit: 'deg', code: 'deg' },
  Δ: { unit: "[p'diop]", code: "[p'diop]" },
  cm: { unit: 'cm', code: 'cm' },
  D: { unit: '[diop]', code: '[diop]' },
  // Dimensionless: logMAR is a log of a ratio; the unit text says which scale.
  logMAR: { unit: 'logMAR', code: '1' },
  mm: { unit: 'mm', code: 'mm' },
  '″': { unit: "''", code: "''" },
  weeks: { unit: 'wk', code: 'wk' },
  grade: { unit: 'grade', code: '{grade}' },
  bytes: { unit: 'By', code: 'By' },
};

/** Fields that place or describe a record rather than record a finding. */
const NOT_FINDINGS: ReadonlySet<string> = new Set([...SECTION_PLACEMENT_KEYS, 'skippedReason']);

/** Sections the export turns into Observations (the plan is a plan, not a finding). */
export const EXPORTED_SECTIONS: readonly SectionCollectionName[] = SECTION_COLLECTIONS.filter(
  (collection) => collection !== 'plan',
);

export interface FindingField {
  collection: SectionCollectionName;
  field: string;
  meta: FieldMeta;
  /** The concept code in Fuselight's CodeSystem: `collection.field`. */
  code: string;
  display: string;
}

/** Every finding field of the exported Sections, in schema order. */
export const FINDING_FIELDS: readonly FindingField[] = EXPORTED_SECTIONS.flatMap((collection) =>
  Object.entries(fieldMeta[collection] as Record<string, FieldMeta>)
    .filter(([field]) => !NOT_FINDINGS.has(field))
    .map(([field, meta]) => ({
      collection,
      field,
      meta,
      code: `${collection}.${field}`,
      display: `${COLLECTION_LABELS[collection]}: ${meta.label}`,
    })),
);

export const INTERPRETATION_CONCEPTS = {
  correspondence: 'Retinal correspondence (computed)',
  bsv: 'Binocular single vision grades (computed)',
  ranges: 'Fusional ranges against norms (computed)',
  npc: 'Near point of convergence against the norm for age (computed)',
  accommodation: 'Amplitude of accommodation for age (computed)',
  acuity: 'Visual acuity with the nearest Snellen line (computed)',
} as const;

export const ACUITY_CORRECTIONS = {
  Uncorrected: 'Uncorrected',
  Corrected: 'With correction',
  Pinhole: 'With pinhole',
} as const;

export interface FuselightConcept {
  code: string;
  display: string;
}

/** Every concept of Fuselight's CodeSystem, as docs/fhir.md lists them. */
export function fuselightConcepts(): FuselightConcept[] {
  const concepts: FuselightConcept[] = [];
  for (const collection of EXPORTED_SECTIONS) {
    concepts.push({
      code: `section.${collection}`,
      display: `${COLLECTION_LABELS[collection]} (Section, e.g. not done)`,
    });
  }
  for (const finding of FINDING_FIELDS) {
    concepts.push({ code: finding.code, display: finding.display });
    for (const option of finding.meta.options ?? []) {
      if (finding.meta.kind !== 'choice') continue;
      concepts.push({ code: `${finding.code}.${option.value}`, display: option.label });
    }
  }
  for (const [key, display] of Object.entries(INTERPRETATION_CONCEPTS)) {
    concepts.push({ code: `interpretation.${key}`, display });
  }
  for (const [key, display] of Object.entries(ACUITY_CORRECTIONS)) {
    concepts.push({ code: `acuity-correction.${key.toLowerCase()}`, display });
  }
  return concepts;
}

export const fuselight = (code: string, display: string): Coding => ({
  system: FUSELIGHT_CODE_SYSTEM,
  code,
  display,
});
