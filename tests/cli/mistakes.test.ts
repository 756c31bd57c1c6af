/**
 * The user's mistakes of issue 12, one test each (in-process through `main`, as bin/loopsmith.js runs
 * it): one clear message, exit 1 for bad input and 2 for a malformed command line, no stack trace,
 * nothing left behind.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { existsSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { assertBuilt, DEMO_STUDY, makeTemporaryDirectory, removeTemporaryDirectories, runArgs, runCli, SMALL_STUDY } from '../fixtures/harness.js';
import { runInProcess, type InProcessResult } from './inProcess.js';

beforeAll(assertBuilt);
afterAll(removeTemporaryDirectories);

/** One short message, no stack trace. */
function expectOneMessage(result: InProcessResult, code: 1 | 2, pattern: RegExp): void {
  expect(result.code, result.stderr).toBe(code);
  expect(result.stderr).toMatch(/^loopsmith: /);
  expect(result.stderr).toMatch(pattern);
  expect(result.stderr).not.toMatch(/internal error|\n\s+at /);
}

describe('ordinary mistakes end in one message, not a stack trace', () => {
  it('run --population 1 is a malformed command line and leaves no database and no run behind', async () => {
    const dir = makeTemporaryDirectory('pop');
    const db = join(dir, 'x.db');
    const result = await runInProcess(['run', SMALL_STUDY, '--db', db, '--population', '1']);
    expectOneMessage(result, 2, /--population 1: expected a whole number of at least 2/);
    expect(readdirSync(dir)).toEqual([]);
  });

  it('run --seed abc is refused and leaves no empty database', async () => {
    const dir = makeTemporaryDirectory('seed');
    const result = await runInProcess(['run', SMALL_STUDY, '--db', join(dir, 'x.db'), '--seed', 'abc']);
    expectOneMessage(result, 2, /--seed abc: expected a whole number/);
    expect(readdirSync(dir)).toEqual([]);
  });

  it('map --out m.jpg names the option and the accepted endings (exit 2)', async () => {
    expectOneMessage(await runInProcess(['map', DEMO_STUDY, '--out', 'm.jpg']), 2, /--out m\.jpg: the file name must end in \.svg or \.png/);
  });

  it('an unwritable --out is refused before drawing, naming the path (exit 1)', async () => {
    const dir = makeTemporaryDirectory('out');
    const blocker = join(dir, 'file');
    writeFileSync(blocker, 'not a folder');
    const result = await runInProcess(['map', DEMO_STUDY, '--out', join(blocker, 'm.svg')]);
    expectOneMessage(result, 1, /cannot (write|use) .*file.*(not a folder|ENOTDIR|EEXIST)/);
  });

  it('a "billion laughs" YAML file is refused by check', async () => {
    const dir = makeTemporaryDirectory('laughs');
    const file = join(dir, 'bomb.yaml');
    const lines = ['a: &a ["lol","lol","lol","lol","lol","lol","lol","lol","lol"]'];
    for (let i = 1; i < 9; i++) {
      const prev = String.fromCharCode(96 + i);
      const name = String.fromCharCode(97 + i);
      lines.push(`${name}: &${name} [*${prev},*${prev},*${prev},*${prev},*${prev},*${prev},*${prev},*${prev},*${prev}]`);
    }
    writeFileSync(file, lines.join('\n') + '\n');
    expectOneMessage(await runInProcess(['check', file]), 1, /aliases .* expand without bound/);
  });
});

describe('unit slips and signs on the command line', () => {
  it('--set crank_1=300 (metres by default, far outside the bounds) is refused with a hint', async () => {
    expectOneMessage(await runInProcess(['evaluate', DEMO_STUDY, '--set', 'crank_1=300']), 1, /300 without a unit is 300 m.*did you mean 300mm\?/);
  });

  it('a plausible bare number stays allowed (metres)', async () => {
    const result = await runInProcess(['evaluate', DEMO_STUDY, '--set', 'crank_1=0.3', '--json']);
    expect(result.code, result.stderr).toBe(0);
    expect(JSON.parse(result.stdout).design.crank_1).toBe(0.3);
  });

  it('--set crank_1=-300mm is refused: a length cannot be negative', async () => {
    expectOneMessage(await runInProcess(['evaluate', DEMO_STUDY, '--set', 'crank_1=-300mm']), 1, /crank_1 is a length and cannot be negative/);
  });

  it('probe --at 100,-450mm is refused: x = 100 m is beyond reach', async () => {
    expectOneMessage(await runInProcess(['probe', DEMO_STUDY, '--at', '100,-450mm']), 1, /X = 100 without a unit is 100 m.*did you mean 100mm\?/);
  });

  it('probe --at -200mm,-525mm reads negative coordinates', async () => {
    const result = await runInProcess(['probe', DEMO_STUDY, '--at', '-200mm,-525mm', '--json']);
    expect(result.code, result.stderr).toBe(0);
    const report = JSON.parse(result.stdout);
    expect(report.point.x).toBeCloseTo(-0.2, 12);
    expect(report.point.y).toBeCloseTo(-0.525, 12);
  });
});

describe('check refuses studies that cannot succeed', () => {
  const demoText = (): string => readFileSync(DEMO_STUDY, 'utf8');

  it('a task region that no design within the bounds can reach', async () => {
    const dir = makeTemporaryDirectory('reach');
    const file = join(dir, 'far.yaml');
    writeFileSync(file, demoText().replace('centre: [0 mm, -450 mm]', 'centre: [0 mm, -2500 mm]'));
    expectOneMessage(await runInProcess(['check', file]), 1, /out of reach of every design within the bounds/);
    const run = await runInProcess(['run', file, '--db', join(dir, 'far.db')]);
    expectOneMessage(run, 1, /out of reach/);
    expect(existsSync(join(dir, 'far.db'))).toBe(false);
  });

  it('a baseline outside the bounds', async () => {
    const dir = makeTemporaryDirectory('baseline');
    const file = join(dir, 'outside.yaml');
    writeFileSync(file, demoText().replace('crank_1: 300 mm', 'crank_1: 500 mm'));
    expectOneMessage(await runInProcess(['check', file]), 1, /baseline\.crank_1: 500 mm lies outside the bounds 150 mm … 450 mm/);
  });

  it('identical joint limits on a mirror-symmetric arm are warned about, with the area each side loses', async () => {
    const result = await runInProcess(['check', DEMO_STUDY]);
    expect(result.code, result.stderr).toBe(0);
    expect(result.stderr).toMatch(/warning: joint_limits: both actuators get .* mirror-symmetric .* clipped differently: .*actuator 1's limit alone removes \d+ % .* actuator 2's alone \d+ %/);
    expect(result.stderr).toMatch(/actuator_2: \{ min: 80 deg, max: 380 deg \}/);
  });

  it("states the demo's baseline is infeasible and which constraints fail", async () => {
    const result = await runInProcess(['check', DEMO_STUDY]);
    expect(result.stdout).toMatch(/baseline: NOT feasible — min_stiffness fail/);
  });
});

describe('evaluate says which task points cannot be assembled', () => {
  it('counts them and names where, instead of silent infinities', async () => {
    const result = await runInProcess(['evaluate', DEMO_STUDY, '--set', 'crank_1=200mm', '--set', 'rod_1=300mm']);
    expect(result.code, result.stderr).toBe(0);
    expect(result.stdout).toMatch(/(\d+) of (\d+) task points cannot be assembled: \(-200 mm, -525 mm\) unreachable/);
    const json = JSON.parse((await runInProcess(['evaluate', DEMO_STUDY, '--set', 'crank_1=200mm', '--set', 'rod_1=300mm', '--json'])).stdout);
    expect(json.taskPoints.failed).toBeGreaterThan(0);
    expect(json.taskPoints.failed).toBeLessThan(json.taskPoints.checked);
  });

  it('says nothing when every task point assembles', async () => {
    const result = await runInProcess(['evaluate', SMALL_STUDY]);
    expect(result.stdout).not.toMatch(/cannot be assembled/);
  });
});

describe('help and hints', () => {
  it('every option of every command has a description and every command shows an example', async () => {
    const top = await runInProcess(['--help']);
    const commands = [...top.stdout.matchAll(/^ {2}loopsmith (\w+)/gm)].map((m) => m[1]!);
    expect(commands.length).toBeGreaterThanOrEqual(14);
    for (const command of commands) {
      const help = (await runInProcess([command, '--help'])).stdout;
      expect(help, command).toMatch(/Examples:/);
      const optionLines = help.split('Examples:')[0]!.split('\n').filter((line) => /^\s+--[a-z]/.test(line));
      for (const line of optionLines) expect(line.trim(), `${command}: ${line}`).toMatch(/^--\S+(, -\w)?\s{2,}[^\s[]/);
    }
  });
});

describe('a run that finds no feasible design says why', () => {
  it('names the constraints that fail most often and by how much', async () => {
    const dir = makeTemporaryDirectory('nofeasible');
    const file = join(dir, 'strict.yaml');
    writeFileSync(file, readFileSync(SMALL_STUDY, 'utf8').replace(/constraints:\n/, 'constraints:\n  - { metric: bandwidth, min: 5000 Hz }\n'));
    const result = await runCli(runArgs(file, join(dir, 'strict.db'), { generations: 2, workers: 1, population: 8 }));
    expect(result.code, result.stderr).toBe(0);
    expect(result.stderr).toMatch(/run 1 found NO feasible design among its \d+ designs/);
    expect(result.stderr).toMatch(/bandwidth\s+\d+ of \d+\s+\d/);
  });
});

describe('numbers that agree', () => {
  it("the run's progress line, its summary and the stored record (what the report plots) give the same hypervolume and counts", async () => {
    const dir = makeTemporaryDirectory('numbers');
    const db = join(dir, 'n.db');
    const result = await runCli(runArgs(SMALL_STUDY, db, { generations: 4, workers: 1, population: 8, quiet: false }));
    expect(result.code, result.stderr).toBe(0);
    const progressHv = [...result.stderr.matchAll(/HV ([\d.]+)/g)].map((m) => Number(m[1])).at(-1);
    const summaryHv = Number(/hypervolume ([\d.]+) \(normalised, as in the report\)/.exec(result.stdout)?.[1]);
    const { readDatabase } = await import('../fixtures/harness.js');
    const stats = readDatabase(db, (d) => d.prepare<[], { hypervolume: number; evaluations: number }>('SELECT hypervolume, evaluations FROM generation_stats ORDER BY generation').all());
    const recorded = stats.at(-1)!.hypervolume;
    expect(progressHv).toBeCloseTo(recorded, 4);
    expect(summaryHv).toBeCloseTo(recorded, 4);
    const asked = stats.reduce((n, s) => n + s.evaluations, 0);
    expect(result.stdout).toContain(`${asked} designs asked for`);
    // No time estimate before the pace is known (the first generation carries the start-up).
    expect(result.stderr).toMatch(/generation 1\/4: .* left —/);
  });
});
