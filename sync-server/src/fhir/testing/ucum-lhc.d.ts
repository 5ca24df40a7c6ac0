// The part of @lhncbc/ucum-lhc (no types of its own) the codes spec uses.
declare module '@lhncbc/ucum-lhc' {
  interface UcumValidation {
    status: 'valid' | 'invalid' | 'error';
    unit?: { code?: string; name?: string };
    msg?: string[];
  }
  const ucum: {
    UcumLhcUtils: { getInstance(): { validateUnitString(code: string): UcumValidation } };
  };
  export default ucum;
}
