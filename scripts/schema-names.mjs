// Writes the study schema's generated name lists (the metric enum) from the catalogues in code.
// Run after a build (`npm run schema:names` builds first): it reads the compiled catalogue in dist/.
//   node scripts/schema-names.mjs          rewrite src/study/study.schema.json (and dist's copy)
//   node scripts/schema-names.mjs --check  exit 1 when the shipped schema differs from the catalogue
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const { schemaNameDrift, writeSchemaNames } = await import(join(root, 'dist', 'study', 'schemaNames.js'));
const file = join(root, 'src', 'study', 'study.schema.json');
const text = readFileSync(file, 'utf8');

if (process.argv.includes('--check')) {
  const drift = schemaNameDrift(JSON.parse(text));
  if (drift.length > 0) {
    console.error(`src/study/study.schema.json differs from the catalogues (run npm run schema:names):\n  ${drift.join('\n  ')}`);
    process.exit(1);
  }
  console.log('src/study/study.schema.json: generated name lists match the catalogues');
} else {
  const next = writeSchemaNames(text);
  const targets = [file, join(root, 'dist', 'study', 'study.schema.json')];
  for (const target of targets) {
    if (!existsSync(target) || readFileSync(target, 'utf8') === next) continue;
    writeFileSync(target, next);
    console.log(`wrote ${target.slice(root.length + 1)}`);
  }
}
