// @lhncbc/ucum-lhc ships no type declarations; this covers the one call the service makes.
declare module '@lhncbc/ucum-lhc' {
  interface ConversionResult {
    readonly status: 'succeeded' | 'failed' | 'error';
    readonly toVal: number | null;
    readonly msg: readonly string[];
  }
  interface ValidationResult {
    readonly status: 'valid' | 'invalid' | 'error';
    readonly ucumCode: string | null;
    readonly msg: readonly string[];
  }
  interface UcumLhcUtils {
    convertUnitTo(fromUnit: string, value: number, toUnit: string): ConversionResult;
    validateUnitString(unit: string): ValidationResult;
  }
  const ucum: { readonly UcumLhcUtils: { getInstance(): UcumLhcUtils } };
  export default ucum;
}
