/**
 * The programmatic API's argument checks: a wrong argument ends in one ApiArgumentError naming the
 * function, the argument (and option field), what was expected and what was given; the easy
 * mistake of passing `loadStudyFile(...)` where a study is meant is accepted.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import {
  ApiArgumentError,
  Evaluator,
  chooseDesign,
  demoStudyNames,
  demoStudyPath,
  designVariables,
  evaluateDesign,
  exportCandidates,
  loadStudyFile,
  loopsmithVersion,
  packageFile,
  parseStudyText,
  queryEvaluations,
  runFront,
  runOptimization,
  runSweep,
  writeReport,
} from '../../src/index.js';
import { readFileSync } from 'node:fs';
import { LoopsmithUserError } from '../../src/core/errors.js';

const loaded = loadStudyFile(demoStudyPath('parcel-sorter'));
const scratch = mkdtempSync(join(tmpdir(), 'loopsmith-api-arguments-'));
afterAll(() => rmSync(scratch, { recursive: true, force: true }));

/** The message of the ApiArgumentError that `call` throws (fails when it throws anything else). */
function argumentError(call: () => unknown): string {
  try {
    call();
  } catch (error) {
    expect(error).toBeInstanceOf(ApiArgumentError);
    expect(error).toBeInstanceOf(LoopsmithUserError);
    expect((error as Error).name).toBe('ApiArgumentError');
    return (error as Error).message;
  }
  throw new Error('expected an ApiArgumentError, but the call returned');
}

describe('study arguments', () => {
  it('evaluateDesign takes the loaded file and its .study alike', () => {
    const fromLoaded = evaluateDesign(loaded, []);
    const fromStudy = evaluateDesign(loaded.study, []);
    expect(fromLoaded.report).toEqual(fromStudy.report);
    expect(fromLoaded.report.metrics['workspace_area']).toBeGreaterThan(0);
  });

  it('overrides as "NAME=VALUE" strings or as an object give the same design', () => {
    const strings = chooseDesign(loaded, ['crank_1=260mm', 'rod_1=0.47']);
    const record = chooseDesign(loaded.study, { crank_1: '260 mm', rod_1: 0.47 });
    expect(record.values).toEqual(strings.values);
    expect(record.values['crank_1']).toBeCloseTo(0.26, 12);
  });

  it('names the function and what a study argument should be', () => {
    expect(argumentError(() => evaluateDesign('studies/parcel-sorter.yaml' as never))).toBe(
      'evaluateDesign: study must be a study: what loadStudyFile(path) or parseStudyText(text) returns, or its .study; got the string "studies/parcel-sorter.yaml"',
    );
    expect(argumentError(() => designVariables(undefined as never))).toMatch(/^designVariables: study must be a study: .*; got undefined$/);
    expect(argumentError(() => new Evaluator({ study: 1 } as never))).toMatch(/^new Evaluator: study must be .*; got an object with key study$/);
  });

  it('the runs need the whole loaded study and say so when given its .study', async () => {
    await expect(runOptimization(loaded.study as never, { dbPath: join(scratch, 'a.db') })).rejects.toThrow(
      /^runOptimization: study must be a loaded study: what loadStudyFile\(path\) or parseStudyText\(text\) returns; got a study \(the \.study of what loadStudyFile returns\) \(this function needs the whole loaded study/,
    );
    await expect(runOptimization(loaded.study as never, { dbPath: 'x.db' })).rejects.toBeInstanceOf(ApiArgumentError);
  });

  it('overrides of the wrong shape', () => {
    expect(argumentError(() => evaluateDesign(loaded, 'crank_1=250mm' as never))).toMatch(
      /^evaluateDesign: overrides must be design overrides: an array of "NAME=VALUE" strings .* or an object \{ NAME: VALUE \} .*; got the string "crank_1=250mm"$/,
    );
    expect(argumentError(() => evaluateDesign(loaded, { crank_1: [0.25] } as never))).toMatch(/^evaluateDesign: overrides must be .*; got an object with key crank_1$/);
  });
});

describe('option objects', () => {
  it('a missing or mistyped required field is named with its path', async () => {
    await expect(runOptimization(loaded, {} as never)).rejects.toThrow(
      'runOptimization: options.dbPath must be a non-empty string (path of the SQLite database); got undefined',
    );
    await expect(runOptimization(loaded, { dbPath: join(scratch, 'b.db'), workers: 0 })).rejects.toThrow(
      'runOptimization: options.workers must be an integer ≥ 1 (worker threads), or left out; got the number 0',
    );
    await expect(runOptimization(loaded, { dbPath: join(scratch, 'c.db'), warmStart: { dbPath: '' } })).rejects.toThrow(
      'runOptimization: options.warmStart.dbPath must be a non-empty string (path of the SQLite database); got the string ""',
    );
    await expect(runSweep(loaded, { dbPath: join(scratch, 'd.db'), samples: 10, method: 'random' as never })).rejects.toThrow(
      'runSweep: options.method must be one of "lhs", "grid"; got the string "random"',
    );
  });

  it('an unknown field is refused (a misspelt option would otherwise be ignored)', async () => {
    await expect(runOptimization(loaded, { dbPath: join(scratch, 'e.db'), generation: 3 } as never)).rejects.toThrow(
      /^runOptimization: options must be an options object \(fields .*generations.*\); got an object with keys dbPath, generation \("generation" is not one of its fields\)$/,
    );
  });

  it('store functions check the path, the run id and the options', async () => {
    expect(argumentError(() => runFront(undefined as never))).toBe('runFront: dbPath must be a non-empty string (path of the SQLite database); got undefined');
    expect(argumentError(() => runFront('x.db', 1.5))).toBe('runFront: runId must be an integer ≥ 1 (a run id), or left out; got the number 1.5');
    expect(argumentError(() => queryEvaluations('x.db', { limit: -1 }))).toBe('queryEvaluations: options.limit must be an integer ≥ 0 (most rows), or left out; got the number -1');
    expect(argumentError(() => queryEvaluations('x.db', { columns: ['id', 3] } as never))).toBe(
      'queryEvaluations: options.columns[1] must be a non-empty string (a column name); got the number 3',
    );
    expect(argumentError(() => exportCandidates('x.db', { format: 'xml', outDir: 'out' } as never))).toBe(
      'exportCandidates: options.format must be one of "json", "csv", "mjcf"; got the string "xml"',
    );
    await expect(writeReport('x.db', undefined, undefined as never)).rejects.toThrow('writeReport: outDir must be a non-empty string (output folder); got undefined');
  });
});

describe('other arguments', () => {
  it('paths and texts', () => {
    expect(argumentError(() => loadStudyFile(loaded as never))).toBe('loadStudyFile: path must be a non-empty string (path of a study file); got a loaded study (what loadStudyFile returns)');
    expect(argumentError(() => parseStudyText(Buffer.from('study: x') as never))).toMatch(/^parseStudyText: text must be a non-empty string \(the YAML text of a study\); got a Buffer of length 8$/);
  });

  it("Evaluator.evaluate checks the design vector's length against the study's variables", () => {
    const evaluator = new Evaluator(loaded);
    expect(argumentError(() => evaluator.evaluate([0.2, 0.3]))).toBe(
      'Evaluator.evaluate: design must be a Float64Array or array of 3 numbers in the order of the design variables (base_span, crank_1, rod_1), SI units; got an array of 2 items',
    );
    expect(evaluator.evaluate(Float64Array.of(0.2, 0.3, 0.45)).metrics.length).toBeGreaterThan(10);
  });

  it('demo studies and the version come from the package folder', () => {
    expect(demoStudyNames()).toContain('parcel-sorter');
    expect(argumentError(() => demoStudyPath('nope'))).toMatch(/^demoStudyPath: name must be one of .*"parcel-sorter".*; got the string "nope"$/);
    const pkg = JSON.parse(readFileSync(packageFile('package.json'), 'utf8')) as { name: string; version: string };
    expect(pkg.name).toBe('loopsmith');
    expect(loopsmithVersion()).toBe(pkg.version);
  });
});
