import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { ClinicalInputError } from './clinical-input.error';
import {
  decimalToLogMAR,
  lettersToLogMAR,
  logMARToDecimal,
  logMARToLetters,
  meanLogMAR,
  nearestSnellenLine,
  nominalLineLogMAR,
  parseAcuity,
  snellenToLogMAR,
} from './visual-acuity';

describe('Snellen and decimal to logMAR', () => {
  // DICOM PS3.17 Annex RR equivalents: 1.0 = 20/20 = 6/6 = 0.0; 2.0 = 20/10 = 6/3 = −0.30.
  it('reads 6/6 and 20/20 as 0.0 logMAR', () => {
    expect(snellenToLogMAR('6/6')).toBeCloseTo(0, 12); // DICOM PS3.17 Annex RR
    expect(snellenToLogMAR('20/20')).toBeCloseTo(0, 12); // DICOM PS3.17 Annex RR
    expect(decimalToLogMAR(1.0)).toBeCloseTo(0, 12); // DICOM PS3.17 Annex RR
  });

  it('reads 6/3, 20/10 and decimal 2.0 as −0.30 logMAR', () => {
    expect(snellenToLogMAR('6/3')).toBeCloseTo(-0.3, 2); // DICOM PS3.17 Annex RR
    expect(snellenToLogMAR('20/10')).toBeCloseTo(-0.3, 2); // DICOM PS3.17 Annex RR
    expect(decimalToLogMAR(2.0)).toBeCloseTo(-0.3, 2); // DICOM PS3.17 Annex RR
  });

  it('reads 20/25 as 0.097 exactly, whose chart line is 0.1', () => {
    // docs/clinical-reference.md, "Exact vs nominal": 20/25 is 0.097 exactly, and 0.1 as a
    // chart line.
    expect(snellenToLogMAR('20/25')).toBeCloseTo(0.097, 3);
    expect(nominalLineLogMAR(snellenToLogMAR('20/25'))).toBe(0.1);
  });

  it('reads 6/12 and 20/40 as the same acuity, log10 2 ≈ 0.301', () => {
    // logMAR = −log10(numerator ÷ denominator), docs/clinical-reference.md.
    expect(snellenToLogMAR('6/12')).toBeCloseTo(0.30103, 5);
    expect(snellenToLogMAR(' 20 / 40 ')).toBeCloseTo(snellenToLogMAR('6/12'), 12);
  });

  it('reads a chart fraction with a decimal denominator such as 6/7.5', () => {
    // −log10(6/7.5) = log10(1.25) ≈ 0.0969, the 0.1 line (one line = 0.1 log unit).
    expect(snellenToLogMAR('6/7.5')).toBeCloseTo(0.09691, 5);
  });

  it('rejects a decimal acuity beyond any chart with the decimal range in the message', () => {
    expect(() => decimalToLogMAR(0.0001)).toThrow(/decimal: must lie between 0\.001 and 10/);
  });

  it.each(['6-12', '6/', '/12', 'six/twelve', '6/0', '0/6', '', '6/12/24'])(
    'rejects %j as not a Snellen fraction',
    (entry) => {
      expect(() => snellenToLogMAR(entry)).toThrow(ClinicalInputError);
    },
  );

  it('rejects a decimal acuity of zero or below and one that is not finite', () => {
    expect(() => decimalToLogMAR(0)).toThrow(/decimal/);
    expect(() => decimalToLogMAR(-0.5)).toThrow(ClinicalInputError);
    expect(() => decimalToLogMAR(Infinity)).toThrow(ClinicalInputError);
  });
});

describe('ETDRS letters', () => {
  // ETDRS letter formula logMAR = 1.7 − 0.02·letters (docs/clinical-reference.md).
  it.each([
    [85, 0.0], // ETDRS formula
    [70, 0.3], // ETDRS formula
    [35, 1.0], // ETDRS formula
  ])('turns %s letters into %s logMAR', (letters, logMAR) => {
    expect(lettersToLogMAR(letters)).toBeCloseTo(logMAR, 10);
    expect(logMARToLetters(logMAR)).toBe(letters);
  });

  it('rejects a fractional, negative or impossible letter count', () => {
    expect(() => lettersToLogMAR(70.5)).toThrow(ClinicalInputError);
    expect(() => lettersToLogMAR(-1)).toThrow(ClinicalInputError);
    expect(() => lettersToLogMAR(101)).toThrow(/letters/);
  });

  it('round-trips every letter score (property)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 100 }), (letters) => {
        expect(logMARToLetters(lettersToLogMAR(letters))).toBe(letters);
      }),
    );
  });
});

describe('decimal and logMAR round trips', () => {
  it('returns to the starting logMAR through decimal (property)', () => {
    fc.assert(
      fc.property(fc.double({ min: -1, max: 3, noNaN: true }), (logMAR) => {
        expect(decimalToLogMAR(logMARToDecimal(logMAR))).toBeCloseTo(logMAR, 9);
      }),
    );
  });

  it('orders worse acuity as a higher logMAR (property)', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 0.01, max: 5, noNaN: true }),
        fc.double({ min: 0.01, max: 5, noNaN: true }),
        (a, b) => {
          fc.pre(a < b);
          // Never better for a worse acuity; strictly worse once the two differ by more than
          // double precision's log10 resolves (a few units in the last place give equal logs).
          expect(decimalToLogMAR(a)).toBeGreaterThanOrEqual(decimalToLogMAR(b));
          if (b / a > 1 + 1e-12) expect(decimalToLogMAR(a)).toBeGreaterThan(decimalToLogMAR(b));
        },
      ),
    );
  });
});

describe('nearest Snellen line', () => {
  it('shows 0.3 logMAR as 6/12 and 20/40', () => {
    // Common practice chart lines; 6/12 = 20/40 = 0.3 by logMAR = −log10(6/12).
    expect(nearestSnellenLine(0.3, '6 m').label).toBe('6/12');
    expect(nearestSnellenLine(0.3, '20 ft').label).toBe('20/40');
  });

  it('puts 20/25 on the 0.1 line, 6/7.5', () => {
    const line = nearestSnellenLine(snellenToLogMAR('20/25'), '6 m');
    expect(line).toMatchObject({ label: '6/7.5', lineLogMAR: 0.1, onChart: true });
  });

  it('shows every chart line as its own nearest line (property of the table)', () => {
    for (let tenth = -3; tenth <= 17; tenth += 1) {
      const logMAR = tenth / 10;
      const metric = nearestSnellenLine(logMAR, '6 m');
      expect(metric.lineLogMAR).toBeCloseTo(logMAR, 10);
      // The printed fraction is within a quarter line of its nominal logMAR (common practice).
      const printed = metric.label.split('/').map(Number) as [number, number];
      expect(Math.abs(-Math.log10(printed[0] / printed[1]) - logMAR)).toBeLessThan(0.025);
      const imperial = nearestSnellenLine(logMAR, '20 ft').label.split('/').map(Number) as [
        number,
        number,
      ];
      expect(Math.abs(-Math.log10(imperial[0] / imperial[1]) - logMAR)).toBeLessThan(0.025);
    }
  });

  it('says when an acuity lies off the chart', () => {
    expect(nearestSnellenLine(2.2, '6 m')).toMatchObject({
      label: 'worse than 6/300',
      onChart: false,
    });
    expect(nearestSnellenLine(-0.5, '20 ft').label).toBe('better than 20/10');
  });
});

describe('meanLogMAR', () => {
  it('averages in logMAR, not in Snellen fractions', () => {
    // Holladay 2004: average logMAR. 6/6 (0.0) and 6/60 (1.0) average to 0.5, about 6/19,
    // whereas the decimal mean (1.0 + 0.1) / 2 = 0.55 would claim about 6/11.
    const mean = meanLogMAR([snellenToLogMAR('6/6'), snellenToLogMAR('6/60')]);
    expect(mean).toBeCloseTo(0.5, 10);
    expect(nearestSnellenLine(mean, '6 m').label).toBe('6/19');
  });

  it('rejects an empty list and a value that is not a logMAR', () => {
    expect(() => meanLogMAR([])).toThrow(/values/);
    expect(() => meanLogMAR([0.1, Number.NaN])).toThrow(/values\[1\]/);
  });
});

describe('parseAcuity', () => {
  it.each([
    ['6/12', 'snellen metric', 0.30103],
    ['20/40', 'snellen imperial', 0.30103],
    ['0.5', 'decimal', 0.30103],
    ['70 letters', 'letters', 0.3],
    ['70L', 'letters', 0.3],
    ['0.3 logMAR', 'logMAR', 0.3],
  ])('reads %j as %s', (entry, notation, logMAR) => {
    // −log10(0.5) = 0.30103; letters by the ETDRS formula.
    const parsed = parseAcuity(entry);
    expect(parsed.notation).toBe(notation);
    expect(parsed.logMAR).toBeCloseTo(logMAR, 5);
    expect(parsed.entry).toBe(entry);
  });

  it.each(['', 'CF', 'good', '6/x', '-0.2'])('rejects %j with a clear error', (entry) => {
    expect(() => parseAcuity(entry)).toThrow(ClinicalInputError);
  });
});
