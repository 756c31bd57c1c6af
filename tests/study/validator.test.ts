/**
 * The study validator written at build time (scripts/compile-validator.mjs, Ajv's standalone code)
 * is the validator a run would compile: same fingerprint, same verdicts and errors on valid and broken
 * studies; a schema it was not made from is compiled instead of being checked by the stale file.
 *
 * Sources: Ajv's documentation of standalone validation code (the generated module validates as the
 * compiled function does; https://ajv.js.org/standalone.html); the studies are the invented demo
 * scenarios under studies/. Needs `npm run build` (dist/).
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { join } from 'node:path';
import { Ajv, type ValidateFunction } from 'ajv';
import { parse } from 'yaml';
import { studySchemaForRegistry } from '../../src/study/parse.js';
import { PRECOMPILED_VALIDATOR_FILE, schemaFingerprint, studyValidator, VALIDATOR_OPTIONS } from '../../src/study/validator.js';
import { assertBuilt } from '../fixtures/harness.js';

const ROOT = join(import.meta.dirname, '..', '..');
const BUILT = join(ROOT, 'dist', 'study', PRECOMPILED_VALIDATOR_FILE);

beforeAll(assertBuilt);

function studyData(file: string): Record<string, unknown> {
  return parse(readFileSync(join(ROOT, 'studies', file), 'utf8')) as Record<string, unknown>;
}

/** Valid demo studies and broken copies of them (a field misspelt, a wrong type, an unknown architecture). */
function cases(): unknown[] {
  const out: unknown[] = [];
  for (const file of ['parcel-sorter.yaml', 'platform-3rrr.yaml', 'rail-sorter-2prr.yaml']) {
    const data = studyData(file);
    out.push(data);
    const { architecture, ...rest } = data;
    out.push({ ...rest, architecturx: architecture });
    out.push({ ...data, architecture: 'no-such-robot' });
    out.push({ ...data, optimizer: { population: 'many' } });
  }
  return out;
}

describe('the validator written at build time', () => {
  const built = (): ValidateFunction & { fingerprint?: string } => createRequire(import.meta.url)(BUILT) as ValidateFunction & { fingerprint?: string };

  it('was made from the schema in force (npm run build after a schema change)', () => {
    expect(built().fingerprint).toBe(schemaFingerprint(studySchemaForRegistry()));
  });

  it('gives the verdicts and errors of a validator compiled now', () => {
    const compiled = new Ajv(VALIDATOR_OPTIONS).compile(studySchemaForRegistry());
    const validate = built();
    let invalid = 0;
    for (const data of cases()) {
      const verdict = validate(data);
      expect(verdict).toBe(compiled(data));
      expect(validate.errors ?? null).toEqual(compiled.errors ?? null);
      if (!verdict) invalid++;
    }
    expect(invalid).toBe(9); // the broken copies are refused (the valid demos pass)
  });
});

describe('studyValidator (as built, dist/study/validator.js)', () => {
  type Module = typeof import('../../src/study/validator.js');
  const builtModule = async (): Promise<Module> => (await import(join(ROOT, 'dist', 'study', 'validator.js'))) as Module;

  it('loads the built file for the schema in force', async () => {
    const { studyValidator: fromDist } = await builtModule();
    const built = createRequire(import.meta.url)(BUILT) as ValidateFunction;
    expect(fromDist(studySchemaForRegistry())).toBe(built);
  });

  it('compiles a schema the built file was not made from, rather than using that file', async () => {
    const { studyValidator: fromDist } = await builtModule();
    const other = { type: 'object', required: ['only_field'], properties: { only_field: { type: 'number' } } };
    const validate = fromDist(other);
    expect(validate({ only_field: 1 })).toBe(true);
    expect(validate(studyData('parcel-sorter.yaml'))).toBe(false);
  });

  it('from the sources (no built file beside them) compiles the schema', () => {
    const validate = studyValidator(studySchemaForRegistry());
    expect(validate(studyData('parcel-sorter.yaml'))).toBe(true);
    expect(validate({ ...studyData('parcel-sorter.yaml'), architecture: 'no-such-robot' })).toBe(false);
  });
});
