import fs from 'node:fs';
import { fileURLToPath } from 'node:url';
import { Ajv2020 } from 'ajv/dist/2020.js';
import addFormatsImport from 'ajv-formats';

/**
 * The JSON Schema (draft 2020-12) of the signed statement, kept beside this file (the build copies it) and served at
 * STATEMENT_SCHEMA_URL, and its validator (ajv). Shared by the web layer and the CLI.
 */
export const STATEMENT_SCHEMA_FILE = fileURLToPath(new URL('./statement-v1.schema.json', import.meta.url));
export const STATEMENT_SCHEMA_URL = '/schemas/statement-v1.schema.json';

let validator: (((value: unknown) => boolean) & { errors?: { instancePath: string; message?: string }[] | null }) | null = null;

export function statementSchemaText(): string {
  return fs.readFileSync(STATEMENT_SCHEMA_FILE, 'utf8');
}

// ajv-formats ships CommonJS with a default export; loaders differ in where they put it.
const addFormats = ((addFormatsImport as unknown as { default?: unknown }).default ?? addFormatsImport) as (ajv: Ajv2020) => void;

/** Problems with the envelope against the schema, as "path: message" lines; empty when it conforms. */
export function schemaProblems(value: unknown): string[] {
  if (!validator) {
    const ajv = new Ajv2020({ allErrors: true, strict: true });
    addFormats(ajv);
    validator = ajv.compile(JSON.parse(statementSchemaText()));
  }
  if (validator(value)) return [];
  return (validator.errors ?? []).map((e) => `${e.instancePath || '(top)'}: ${e.message ?? 'invalid'}`);
}
