// The one error the clinical computation throws. A wrong entry must never turn into a silent
// number on a chart, so every check names the field and says what is wrong with it.
export class ClinicalInputError extends Error {
  override readonly name = 'ClinicalInputError';

  constructor(
    readonly field: string,
    problem: string,
  ) {
    super(`${field}: ${problem}`);
  }
}
