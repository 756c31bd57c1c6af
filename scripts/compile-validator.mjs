// Writes the study schema's validator as code (Ajv standalone), so no run compiles it (about 0.3 s):
// dist/study/studyValidator.cjs, with the fingerprint of the schema it was made from. Run after tsc
// (npm run build); src/study/validator.ts loads it only when the fingerprint matches.
import { writeFileSync } from 'node:fs';
import { Ajv } from 'ajv';
import standalone from 'ajv/dist/standalone/index.js';

const dist = new URL('../dist/study/', import.meta.url);
const { studySchemaForRegistry } = await import(new URL('parse.js', dist).href);
const { PRECOMPILED_VALIDATOR_FILE, VALIDATOR_OPTIONS, schemaFingerprint } = await import(new URL('validator.js', dist).href);
const schema = studySchemaForRegistry();
const ajv = new Ajv({ ...VALIDATOR_OPTIONS, code: { source: true } });
const code = (standalone.default ?? standalone)(ajv, ajv.compile(schema));
writeFileSync(new URL(PRECOMPILED_VALIDATOR_FILE, dist), `${code}\nmodule.exports.fingerprint = ${JSON.stringify(schemaFingerprint(schema))};\n`);
