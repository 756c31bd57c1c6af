/**
 * The study schema's validator. Compiling it (Ajv) costs about 0.3 s, so `npm run build` writes it
 * once as code (scripts/compile-validator.mjs, Ajv's standalone code) beside this module; a process
 * loads that file instead, after checking that it was made from the schema in force (its
 * fingerprint). Run from the TypeScript sources, or after a schema change without a build, the
 * validator is compiled here as before.
 */
import { createHash } from 'node:crypto';
import { createRequire } from 'node:module';
import type { Ajv as AjvClass, Options, ValidateFunction } from 'ajv';

/** The file `npm run build` writes next to this module (CommonJS, so that it loads synchronously). */
export const PRECOMPILED_VALIDATOR_FILE = 'studyValidator.cjs';

/** Options of the validator, the same whether compiled here or at build time. */
export const VALIDATOR_OPTIONS: Options = { allErrors: true, strict: false };

/** SHA-256 of the schema's JSON text: the precompiled validator is used only for this very schema. */
export function schemaFingerprint(schema: Record<string, unknown>): string {
  return createHash('sha256').update(JSON.stringify(schema)).digest('hex');
}

const require = createRequire(import.meta.url);

function precompiled(fingerprint: string): ValidateFunction | null {
  try {
    const loaded = require(`./${PRECOMPILED_VALIDATOR_FILE}`) as ValidateFunction & { fingerprint?: unknown };
    return loaded.fingerprint === fingerprint ? loaded : null;
  } catch {
    return null; // not built (sources run directly): compiled below
  }
}

/** Compiles `schema` now; Ajv itself (about 0.15 s to load) is loaded only here. */
export function compileValidator(schema: Record<string, unknown>): ValidateFunction {
  const { Ajv } = require('ajv') as { Ajv: typeof AjvClass };
  return new Ajv(VALIDATOR_OPTIONS).compile(schema);
}

/** A validator of `schema`: the one written at build time when it matches, else compiled now. */
export function studyValidator(schema: Record<string, unknown>): ValidateFunction {
  return precompiled(schemaFingerprint(schema)) ?? compileValidator(schema);
}
