// Bytes allocated per design evaluation and per solved point, single thread, demo study defaults.
// Run by bench/speed.mjs in a child process with a young generation large enough that no collection
// happens while it measures (so the growth of the used heap is what the evaluations allocated):
//   node --expose-gc --min-semi-space-size=512 --max-semi-space-size=512 bench/alloc.mjs [study.yaml]
import { readFileSync } from 'node:fs';
import v8 from 'node:v8';

const root = new URL('../', import.meta.url);
const { Evaluator, parseStudyText } = await import(new URL('dist/index.js', root).href);
const file = process.argv[2] ?? 'parcel-sorter.yaml';
const text = readFileSync(new URL(`studies/${file}`, root), 'utf8').replace(/^\s*grid_cells:.*$/m, '');
const evaluator = new Evaluator(parseStudyText(text, 'bench').study);
let seed = 12345;
const rand = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
const designs = Array.from({ length: 200 }, () => Float64Array.from(evaluator.variables, (v) => (v.kind === 'real' ? v.min + rand() * (v.max - v.min) : v.min)));
for (let k = 0; k < 400; k++) evaluator.evaluate(designs[k % 200]);
if (typeof globalThis.gc !== 'function') throw new Error('run with --expose-gc (see the header)');
globalThis.gc();
const count = 100;
let samples = 0;
const before = v8.getHeapStatistics().used_heap_size;
for (let k = 0; k < count; k++) {
  evaluator.evaluate(designs[k % 200]);
  samples += evaluator.lastWorkspaceSamples();
}
const allocated = v8.getHeapStatistics().used_heap_size - before;
process.stdout.write(`${JSON.stringify({ bytes_per_evaluation: Math.round(allocated / count), bytes_per_workspace_sample: allocated / samples })}\n`);
