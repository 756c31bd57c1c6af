// Writes the name lists of the shipped schemas from the catalogues in code (src/study/schemaNames.ts):
// the study schema's metric enum and the candidate-sheet schema's metrics objects.
// Run after a build (`npm run schema:names` builds first): it reads the compiled catalogue in dist/.
//   node scripts/schema-names.mjs          rewrite the schemas in src/ (and their copies in dist/)
//   node scripts/schema-names.mjs --check  exit 1 when a shipped schema differs from the catalogue
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const names = await import(join(root, 'dist', 'study', 'schemaNames.js'));
const files = [
  { rel: join('study', 'study.schema.json'), drift: names.schemaNameDrift, write: names.writeSchemaNames },
  { rel: join('export', 'candidate.schema.json'), drift: names.candidateMetricDrift, write: names.writeCandidateMetrics },
];

let failed = false;
for (const file of files) {
  const source = join(root, 'src', file.rel);
  const text = readFileSync(source, 'utf8');
  if (process.argv.includes('--check')) {
    const drift = file.drift(JSON.parse(text));
    if (drift.length > 0) {
      failed = true;
      console.error(`src/${file.rel} differs from the catalogues (run npm run schema:names):\n  ${drift.join('\n  ')}`);
    } else console.log(`src/${file.rel}: generated name lists match the catalogues`);
    continue;
  }
  const next = file.write(text);
  for (const target of [source, join(root, 'dist', file.rel)]) {
    if (!existsSync(target) || readFileSync(target, 'utf8') === next) continue;
    writeFileSync(target, next);
    console.log(`wrote ${target.slice(root.length + 1)}`);
  }
}
if (failed) process.exit(1);
