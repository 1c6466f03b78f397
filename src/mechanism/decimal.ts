import DecimalImport from 'decimal.js';

export type DecimalConstructor = typeof import('decimal.js').Decimal;
export type Dec = InstanceType<DecimalConstructor>;

// decimal.js ships an ES module whose default export is the class, but CommonJS-style
// typings, so under NodeNext TypeScript types the default import as the module record.
// Loaders differ too (the CommonJS build also hangs the class on `.default`), so accept both.
const imported = DecimalImport as unknown as DecimalConstructor & { default?: DecimalConstructor };
const DecimalClass: DecimalConstructor = typeof imported.clone === 'function' ? imported : (imported.default as DecimalConstructor);

/** An independent decimal.js constructor with its own precision, so no caller changes another's settings. */
export function decimalWithPrecision(precision: number): DecimalConstructor {
  return DecimalClass.clone({ precision });
}
