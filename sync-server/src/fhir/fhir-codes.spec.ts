import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import ucum from '@lhncbc/ucum-lhc';
import { describe, expect, it } from 'vitest';
import type { FieldUnit } from '@fuselight/shared';
import {
  clinicNumberSystem,
  FUSELIGHT_CODE_SYSTEM,
  fuselightConcepts,
  LOINC_UNCORRECTED_ACUITY,
  SNOMED,
  UCUM_UNITS,
} from './fhir-codes';

const ucumUtils = ucum.UcumLhcUtils.getInstance();

/** LOINC's mod-10 check digit [memory]: Luhn over the digits, doubling from the rightmost. */
function loincCheckDigit(body: string): number {
  let sum = 0;
  const digits = body.split('').reverse().map(Number);
  digits.forEach((d, i) => {
    const v = i % 2 === 0 ? d * 2 : d;
    sum += v > 9 ? v - 9 : v;
  });
  return (10 - (sum % 10)) % 10;
}

describe("the export's codes and units", () => {
  // Each unit code checked against UCUM as the @lhncbc/ucum-lhc package (the US National Library
  // of Medicine's UCUM library, which ships UCUM's own unit table) reads it.
  it.each([
    ['°', 'deg', 'degree - plane angle'],
    ['Δ', "[p'diop]", 'prism diopter (magnifying power)'],
    ['cm', 'cm', 'centimeter'],
    ['D', '[diop]', 'diopter (lens)'],
    ['logMAR', '1', '1'],
    ['mm', 'mm', 'millimeter'],
    ['″', "''", 'arc second'],
    ['weeks', 'wk', 'week'],
  ] as const)('writes %s as the UCUM code %s (%s)', (stored, code, name) => {
    expect(UCUM_UNITS[stored as FieldUnit]?.code).toBe(code);
    const checked = ucumUtils.validateUnitString(code);
    expect(checked.status).toBe('valid');
    expect(String(checked.unit?.name)).toBe(name);
  });

  it('gives logMAR as a dimensionless quantity whose unit text says logMAR', () => {
    expect(UCUM_UNITS.logMAR).toEqual({ unit: 'logMAR', code: '1' });
    // logMAR itself is no UCUM unit (ucum-lhc refuses it), which is why the code is "1".
    expect(ucumUtils.validateUnitString('logMAR').status).toBe('invalid');
  });

  it('uses the SNOMED CT concepts of the eye care value sets, sources named', () => {
    // 251739003 Distance visual acuity, 251743004 Near visual acuity: the visual acuity value set
    // of HL7's Eye Care implementation guide (FHIR R4, hl7.org/fhir/uv/eyecare), also listed in
    // HL7's CDA eye care guide as VisualAcuityObservationCodes. Displays [memory] from SNOMED CT.
    expect(SNOMED.distanceVisualAcuity.code).toBe('251739003');
    expect(SNOMED.nearVisualAcuity.code).toBe('251743004');
    // 362502000 Entire right eye, 362503005 Entire left eye: the same CDA guide's
    // VisualAcuityTargetSiteCodes. Displays [memory] from SNOMED CT.
    expect(SNOMED.rightEye.code).toBe('362502000');
    expect(SNOMED.leftEye.code).toBe('362503005');
  });

  it('uses LOINC only for uncorrected acuity of one eye, each term read from a stored source', () => {
    // Each code and display read from the stored LOINC pages of healthassure.in (LOINC 2.82,
    // status ACTIVE, scale quantitative, property length ratio):
    //   98505-1 Visual acuity far uncorrected Right eye  (www.healthassure.in/codes/loinc-98505-1-…)
    //   98501-0 Visual acuity near uncorrected Left eye  (www.healthassure.in/codes/loinc-98501-0-…)
    //   98499-7 Visual acuity uncorrected Right eye      (www.healthassure.in/codes/loinc-98499-7-…)
    //   98498-9 Visual acuity uncorrected Left eye       (the Taiwan SFAA FHIR IG's example
    //           Observation visual-acuity-min, build.fhir.org/ig/sfaassn2025-source/base)
    // No far-specific term for the left eye and no near-specific term for the right eye could be
    // read from a stored source, so those two carry the eye-specific term without distance.
    expect(LOINC_UNCORRECTED_ACUITY).toEqual({
      rightDistanceUncorrectedLogMar: {
        code: '98505-1',
        display: 'Visual acuity far uncorrected Right eye',
      },
      leftDistanceUncorrectedLogMar: {
        code: '98498-9',
        display: 'Visual acuity uncorrected Left eye',
      },
      rightNearUncorrectedLogMar: {
        code: '98499-7',
        display: 'Visual acuity uncorrected Right eye',
      },
      leftNearUncorrectedLogMar: {
        code: '98501-0',
        display: 'Visual acuity near uncorrected Left eye',
      },
    });
    // Every LOINC code's check digit is right (LOINC's mod-10 algorithm, as LOINC's users' guide
    // describes it [memory]): a typo in a code fails here.
    for (const { code } of Object.values(LOINC_UNCORRECTED_ACUITY)) {
      const [body, check] = code.split('-') as [string, string];
      expect(loincCheckDigit(body)).toBe(Number(check));
    }
  });

  it("lists every concept of Fuselight's CodeSystem, with its display, in docs/fhir.md", () => {
    const doc = readFileSync(join(__dirname, '../../../docs/fhir.md'), 'utf8');
    expect(doc).toContain(FUSELIGHT_CODE_SYSTEM);
    // Rows read as prettier may align them: | `code` | display |
    const listed = new Map<string, string>();
    for (const line of doc.split('\n')) {
      const row = /^\|\s*`([^`]+)`\s*\|\s*(.*?)\s*\|\s*$/.exec(line);
      if (row) listed.set(row[1]!, row[2]!);
    }
    const missing = fuselightConcepts().filter((c) => listed.get(c.code) !== c.display);
    expect(missing.map((c) => `| \`${c.code}\` | ${c.display} |`)).toEqual([]);
  });

  it('names concepts once each and keeps the clinic number system a URI of the site', () => {
    const codes = fuselightConcepts().map((c) => c.code);
    expect(new Set(codes).size).toBe(codes.length);
    expect(clinicNumberSystem('01935a00-0000-7000-8000-000000000001')).toBe(
      'https://fuselight.app/fhir/NamingSystem/clinic-number/01935a00-0000-7000-8000-000000000001',
    );
  });
});
