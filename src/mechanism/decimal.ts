import DecimalImport from 'decimal.js';

export type DecimalConstructor = typeof import('decimal.js').Decimal;
export type Dec = InstanceType<DecimalConstructor>;

// decimal.js ships an ES module with a default export but CommonJS-style typings,
// so under NodeNext TypeScript types the default import as the module record. The
// class carries itself as `.default` (decimal.js sets Decimal.default = Decimal),
// which reads the same at runtime and type-checks.
const DecimalClass = (DecimalImport as unknown as { default: DecimalConstructor }).default;

/** An independent decimal.js constructor with its own precision, so no caller changes another's settings. */
export function decimalWithPrecision(precision: number): DecimalConstructor {
  return DecimalClass.clone({ precision });
}
