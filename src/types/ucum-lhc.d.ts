// @lhncbc/ucum-lhc ships no type declarations; this covers the calls the service makes.
declare module '@lhncbc/ucum-lhc' {
  interface ConversionResult {
    readonly status: 'succeeded' | 'failed' | 'error';
    readonly toVal: number | null;
    readonly msg: readonly string[];
    /** The parsed units, on success. */
    readonly fromUnit?: UcumUnit;
    readonly toUnit?: UcumUnit;
  }
  /** A parsed unit; `convertFrom` converts a value of `fromUnit` into this unit (throws if it cannot). */
  export interface UcumUnit {
    convertFrom(value: number, fromUnit: UcumUnit): number;
  }
  interface ValidationResult {
    readonly status: 'valid' | 'invalid' | 'error';
    readonly ucumCode: string | null;
    readonly msg: readonly string[];
  }
  interface UcumLhcUtils {
    convertUnitTo(fromUnit: string, value: number, toUnit: string): ConversionResult;
    validateUnitString(unit: string): ValidationResult;
    /** 'normal' when `toUnit.convertFrom` converts the pair; otherwise it needs a molar mass or charge. */
    detectConversionType(fromUnit: UcumUnit, toUnit: UcumUnit): string;
  }
  const ucum: { readonly UcumLhcUtils: { getInstance(): UcumLhcUtils } };
  export default ucum;
}
