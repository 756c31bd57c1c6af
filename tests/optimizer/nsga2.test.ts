import { describe, expect, it } from 'vitest';
import { createHash } from 'node:crypto';
import { ParetoArchive } from '../../src/optimizer/archive.js';
import { Nsga2, optimize, type Member, type Nsga2State } from '../../src/optimizer/nsga2.js';
import { constr, dtlz2, tnk, zdt1, zdt3, type TestProblem } from '../../src/optimizer/testProblems.js';
import { sanitizeEvaluation, type BatchEvaluate, type Evaluation, type ProblemSpec } from '../../src/optimizer/types.js';

/** Bit pattern of numbers, so that comparisons are exact (no tolerance, -0 distinct from 0). */
function bits(values: ArrayLike<number>): string {
  return Buffer.from(Float64Array.from(values).buffer).toString('hex');
}

function fingerprint(population: readonly Member[]): string {
  return population
    .map((member) =>
      [
        bits(member.design),
        bits(member.evaluation.objectives),
        bits([member.evaluation.violation, member.crowding, member.rank]),
        member.evaluation.failed ?? '',
      ].join('|'),
    )
    .join('\n');
}

/**
 * A small mixed problem exercising every feature: real, integer and categorical variables,
 * a 'max' objective, a constraint, and evaluations that fail (by reason, and by NaN).
 */
const mixedProblem: ProblemSpec = {
  variables: [
    { name: 'x', kind: 'real', lower: -1, upper: 2 },
    { name: 'y', kind: 'real', lower: 0, upper: 1 },
    { name: 'count', kind: 'integer', lower: -3, upper: 4 },
    { name: 'material', kind: 'categorical', choices: ['steel', 'aluminium', 'carbon', 'titanium', 'wood'] },
  ],
  objectives: [
    { name: 'cost', sense: 'min' },
    { name: 'benefit', sense: 'max' },
  ],
};

const mixedEvaluate: BatchEvaluate = (designs) =>
  designs.map((design): Evaluation => {
    const [x, y, count, material] = Array.from(design) as [number, number, number, number];
    if (x > 1.8) return { objectives: [0, 0], violation: 0, failed: 'simulated solver divergence' };
    if (y > 0.95) return { objectives: [Number.NaN, 1], violation: 0 };
    const cost = x * x + 0.1 * Math.abs(count) + 0.05 * material;
    const benefit = x + y + 0.02 * count - 0.01 * material;
    return { objectives: [cost, benefit], violation: Math.max(0, 0.2 - y) };
  });

async function recordRun(seed: number, generations: number, resume?: Nsga2State): Promise<{ fingerprints: Map<number, string>; snapshots: Map<number, string> }> {
  const fingerprints = new Map<number, string>();
  const snapshots = new Map<number, string>();
  await optimize(mixedProblem, mixedEvaluate, {
    populationSize: 24,
    seed,
    termination: { generations },
    resume,
    onGeneration: ({ generation, population, snapshot }) => {
      fingerprints.set(generation, fingerprint(population));
      snapshots.set(generation, JSON.stringify(snapshot()));
    },
  });
  return { fingerprints, snapshots };
}

describe('determinism and resume', () => {
  it('same seed and same evaluations give identical populations bit for bit; another seed differs', async () => {
    const first = await recordRun(11, 30);
    const second = await recordRun(11, 30);
    const other = await recordRun(12, 30);
    expect(first.fingerprints.size).toBe(31);
    for (const [generation, value] of first.fingerprints) expect(second.fingerprints.get(generation)).toBe(value);
    expect(other.fingerprints.get(30)).not.toBe(first.fingerprints.get(30));
  });

  it('restoring a JSON snapshot of generation g continues exactly like the uninterrupted run', async () => {
    const uninterrupted = await recordRun(5, 30);
    for (const resumeAt of [0, 9, 29]) {
      const state = JSON.parse(uninterrupted.snapshots.get(resumeAt)!) as Nsga2State;
      const resumed = await recordRun(5, 30, state);
      expect(resumed.fingerprints.size).toBe(30 - resumeAt);
      for (let generation = resumeAt + 1; generation <= 30; generation++) {
        expect(resumed.fingerprints.get(generation)).toBe(uninterrupted.fingerprints.get(generation));
        expect(resumed.snapshots.get(generation)).toBe(uninterrupted.snapshots.get(generation));
      }
    }
  });

  it('a restored optimizer reports the same population, ranks and crowding as the original', async () => {
    const settings = { populationSize: 20, seed: 3 };
    const optimizer = new Nsga2(mixedProblem, settings);
    optimizer.tell(optimizer.initialDesigns(), await mixedEvaluate(optimizer.initialDesigns()));
    let snapshotsWithFailures = 0;
    for (let generation = 0; generation <= 5; generation++) {
      const snapshot = optimizer.snapshot();
      if (snapshot.population.some((entry) => entry.evaluation.failed !== undefined)) snapshotsWithFailures++;
      // The snapshot is plain JSON: a JSON round trip leaves it unchanged, failed members included
      // (their non-finite numbers are written as null).
      expect(JSON.parse(JSON.stringify(snapshot))).toEqual(snapshot);
      const restored = Nsga2.restore(mixedProblem, settings, JSON.parse(JSON.stringify(snapshot)) as Nsga2State);
      expect(restored.generation).toBe(optimizer.generation);
      expect(fingerprint(restored.population())).toBe(fingerprint(optimizer.population()));
      expect(fingerprint(restored.front())).toBe(fingerprint(optimizer.front()));
      expect(restored.ask().map(bits)).toEqual(optimizer.ask().map(bits));
      const offspring = optimizer.ask();
      optimizer.tell(offspring, await mixedEvaluate(offspring));
    }
    expect(snapshotsWithFailures).toBeGreaterThan(0);
  });

  it('ask() repeats itself until tell(), and a snapshot taken between ask and tell resumes to the same offspring', async () => {
    const optimizer = new Nsga2(mixedProblem, { populationSize: 16, seed: 8 });
    expect(optimizer.generation).toBe(-1);
    const initial = optimizer.initialDesigns();
    expect(optimizer.initialDesigns().map(bits)).toEqual(initial.map(bits));
    optimizer.tell(initial, await mixedEvaluate(initial));
    expect(optimizer.generation).toBe(0);
    const offspring = optimizer.ask();
    expect(optimizer.ask().map(bits)).toEqual(offspring.map(bits));
    const midway = Nsga2.restore(mixedProblem, { populationSize: 16, seed: 8 }, optimizer.snapshot());
    expect(midway.ask().map(bits)).toEqual(offspring.map(bits));
  });
});

describe('variables of every kind', () => {
  it('keeps integers and categoricals in range, reals in bounds, and explores every choice', async () => {
    const asked: Float64Array[] = [];
    const recordingEvaluate: BatchEvaluate = (designs) => {
      asked.push(...designs);
      return mixedEvaluate(designs);
    };
    await optimize(mixedProblem, recordingEvaluate, { populationSize: 20, seed: 21, termination: { generations: 20 } });
    expect(asked).toHaveLength(20 * 21);
    const seenCounts = new Set<number>();
    const seenMaterials = new Set<number>();
    let problems = 0;
    for (const design of asked) {
      const [x, y, count, material] = Array.from(design) as [number, number, number, number];
      if (!(x >= -1 && x <= 2 && y >= 0 && y <= 1)) problems++;
      if (!(Number.isInteger(count) && count >= -3 && count <= 4)) problems++;
      if (!(Number.isInteger(material) && material >= 0 && material <= 4)) problems++;
      seenCounts.add(count);
      seenMaterials.add(material);
    }
    expect(problems).toBe(0);
    expect([...seenCounts].sort((a, b) => a - b)).toEqual([-3, -2, -1, 0, 1, 2, 3, 4]);
    expect([...seenMaterials].sort((a, b) => a - b)).toEqual([0, 1, 2, 3, 4]);
  });

  it('eliminates duplicates among the initial designs and the offspring', async () => {
    const optimizer = new Nsga2(mixedProblem, { populationSize: 30, seed: 4 });
    const initial = optimizer.initialDesigns();
    expect(new Set(initial.map(bits)).size).toBe(30);
    optimizer.tell(initial, await mixedEvaluate(initial));
    for (let generation = 0; generation < 10; generation++) {
      const offspring = optimizer.ask();
      const keys = new Set(optimizer.population().map((member) => bits(member.design)));
      for (const child of offspring) {
        expect(keys.has(bits(child))).toBe(false);
        keys.add(bits(child));
      }
      optimizer.tell(offspring, await mixedEvaluate(offspring));
    }
  });

  it('reports a maximised objective in its own sense and drives it up', async () => {
    const problem: ProblemSpec = {
      variables: [{ name: 'x', kind: 'real', lower: 0, upper: 1 }],
      objectives: [
        { name: 'gain', sense: 'max' },
        { name: 'gain squared', sense: 'max' },
      ],
    };
    const evaluate: BatchEvaluate = (designs) => designs.map((design) => ({ objectives: [design[0]!, design[0]! * design[0]!], violation: 0 }));
    const { front } = await optimize(problem, evaluate, { populationSize: 10, seed: 1, termination: { generations: 30 } });
    // Derived: both objectives increase with x, so the front is the single design x = 1 (or very near).
    for (const member of front) expect(member.evaluation.objectives[0]).toBeGreaterThan(0.99);
  });
});

describe('sanitizeEvaluation and failed designs', () => {
  it('turns NaN, infinite and malformed results into failures with a reason', () => {
    expect(sanitizeEvaluation({ objectives: [1, Number.NaN], violation: 0 })).toEqual({
      objectives: [1, Number.NaN],
      violation: Infinity,
      failed: 'objective 1 is NaN',
    });
    expect(sanitizeEvaluation({ objectives: [1, 2], violation: Number.NaN }).failed).toBe('violation is NaN');
    expect(sanitizeEvaluation({ objectives: [Infinity, 2], violation: 0 }).failed).toBe('objective 0 is Infinity');
    expect(sanitizeEvaluation({ objectives: [1, 2], violation: -0.5 }).failed).toMatch(/negative/);
    expect(sanitizeEvaluation({ objectives: [1], violation: 0 }, 2).failed).toBe('expected 2 objectives, got 1');
    const failed = sanitizeEvaluation({ objectives: [1, 2], violation: 0, failed: 'mesh error' });
    expect(failed).toEqual({ objectives: [1, 2], violation: Infinity, failed: 'mesh error' });
    const clean = sanitizeEvaluation({ objectives: [-0, 3], violation: 0.5 });
    expect(clean.failed).toBeUndefined();
    expect(Object.is(clean.objectives[0], 0)).toBe(true);
    expect(clean.violation).toBe(0.5);
  });

  it('never lets a failed design into the front, even where failures would look best', async () => {
    const base = zdt1(10);
    // Designs with x1 < 0.3 fail (half by reason, half by a NaN objective); their objectives
    // would otherwise have been excellent.
    const evaluate: BatchEvaluate = async (designs) => {
      const evaluations = await base.evaluate(designs);
      return evaluations.map((evaluation, j) => {
        const x1 = designs[j]![0]!;
        if (x1 >= 0.3) return evaluation;
        return j % 2 === 0 ? { objectives: [-1, -1], violation: 0, failed: 'diverged' } : { objectives: [Number.NaN, -1], violation: 0 };
      });
    };
    let failedSeen = 0;
    const optimizer = new Nsga2(base.problem, { populationSize: 30, seed: 2 });
    const initial = optimizer.initialDesigns();
    optimizer.tell(initial, await evaluate(initial));
    for (let generation = 0; generation <= 40; generation++) {
      const population = optimizer.population();
      const failedMembers = population.filter((member) => member.evaluation.failed !== undefined);
      failedSeen += failedMembers.length;
      // Failed members carry violation +Infinity and a reason, and rank behind every successful member.
      const successfulRanks = population.filter((member) => member.evaluation.failed === undefined).map((member) => member.rank);
      for (const member of failedMembers) {
        expect(member.evaluation.violation).toBe(Infinity);
        expect(member.evaluation.failed).toMatch(/diverged|objective 0 is NaN/);
        expect(member.rank).toBeGreaterThan(Math.max(...successfulRanks));
      }
      const front = optimizer.front();
      expect(front.length).toBeGreaterThan(0);
      for (const member of front) {
        expect(member.evaluation.failed).toBeUndefined();
        expect(member.design[0]).toBeGreaterThanOrEqual(0.3);
      }
      const offspring = optimizer.ask();
      optimizer.tell(offspring, await evaluate(offspring));
    }
    expect(failedSeen).toBeGreaterThan(0);
  });

  it('an all-failing evaluator gives an empty front and no crash', async () => {
    const evaluate: BatchEvaluate = (designs) => designs.map(() => ({ objectives: [Number.NaN, Number.NaN], violation: Number.NaN }));
    const { front, population } = await optimize(zdt1(5).problem, evaluate, { populationSize: 8, seed: 1, termination: { generations: 3 } });
    expect(front).toHaveLength(0);
    expect(population).toHaveLength(8);
    for (const member of population) expect(member.evaluation.failed).toBe('objective 0 is NaN');
  });
});

describe('constrained problems (Deb et al. 2002, Section VI)', () => {
  it('CONSTR: the front is always feasible, every infeasible member ranks behind every feasible one, and the final front lies on the known front', async () => {
    const problem = constr();
    let generationsChecked = 0;
    const { front } = await optimize(problem.problem, problem.evaluate, {
      populationSize: 60,
      seed: 17,
      termination: { generations: 80 },
      onGeneration: ({ population }) => {
        generationsChecked++;
        const feasible = population.filter((member) => member.evaluation.violation === 0);
        const infeasible = population.filter((member) => member.evaluation.violation > 0);
        const worstFeasibleRank = Math.max(-1, ...feasible.map((member) => member.rank));
        // Deb et al. 2002, Section IV: every feasible solution constrained-dominates every infeasible one.
        for (const member of infeasible) expect(member.rank).toBeGreaterThan(worstFeasibleRank);
        for (const member of population.filter((candidate) => candidate.rank === 0 && feasible.length > 0)) {
          expect(member.evaluation.violation).toBe(0);
        }
      },
    });
    expect(generationsChecked).toBe(81);
    expect(front.length).toBeGreaterThan(30);
    // Derived: feasibility needs 9 x1 - 1 >= x2 >= 6 - 9 x1 and x2 >= 0, so x1 >= 7/18 and the
    // least f2 = (1 + x2)/x1 is (7 - 9 f1)/f1 for f1 <= 2/3 and 1/f1 above: the known front.
    const knownFront: [number, number][] = [];
    for (let i = 0; i <= 5000; i++) {
      const f1 = 7 / 18 + ((1 - 7 / 18) * i) / 5000;
      knownFront.push([f1, f1 <= 2 / 3 ? (7 - 9 * f1) / f1 : 1 / f1]);
    }
    // Distance in objectives scaled by the front's extent (f1 spans 11/18, f2 spans 9 - 1 = 8).
    const distances = front.map((member) => {
      const [f1, f2] = member.evaluation.objectives as [number, number];
      let nearest = Infinity;
      for (const [a, b] of knownFront) nearest = Math.min(nearest, Math.hypot((f1 - a) / (11 / 18), (f2 - b) / 8));
      return nearest;
    });
    for (const member of front) {
      expect(member.evaluation.violation).toBe(0);
      expect(member.evaluation.objectives[0]).toBeGreaterThanOrEqual(7 / 18 - 1e-9);
    }
    // Thresholds common practice, no source (measured with seed 17: mean 0.0024, max 0.011).
    expect(distances.reduce((sum, value) => sum + value, 0) / distances.length).toBeLessThan(0.005);
    expect(Math.max(...distances)).toBeLessThan(0.03);
  });

  it('TNK: no infeasible member ever appears in front()', async () => {
    const problem = tnk();
    const optimizer = new Nsga2(problem.problem, { populationSize: 40, seed: 9 });
    const initial = optimizer.initialDesigns();
    optimizer.tell(initial, await problem.evaluate(initial));
    let sawInfeasible = false;
    for (let generation = 0; generation < 60; generation++) {
      sawInfeasible ||= optimizer.population().some((member) => member.evaluation.violation > 0);
      for (const member of optimizer.front()) {
        const [recomputed] = await problem.evaluate([member.design]);
        expect(recomputed!.violation).toBe(0);
        expect(member.evaluation.violation).toBe(0);
      }
      const offspring = optimizer.ask();
      optimizer.tell(offspring, await problem.evaluate(offspring));
    }
    expect(sawInfeasible).toBe(true);
    expect(optimizer.front().length).toBeGreaterThan(20);
  });
});

describe('argument checks', () => {
  it('rejects mismatched tell() arguments and reduces an oversized initial population to N', async () => {
    const problem = zdt1(4);
    const optimizer = new Nsga2(problem.problem, { populationSize: 6, seed: 1 });
    expect(() => optimizer.ask()).toThrow();
    const designs = Array.from({ length: 15 }, (_, j) => Float64Array.from([j / 14, 0.5, 0.5, 0.5]));
    expect(() => optimizer.tell(designs, [])).toThrow();
    expect(() => optimizer.tell([new Float64Array(3)], [{ objectives: [0, 0], violation: 0 }])).toThrow();
    optimizer.tell(designs, await problem.evaluate(designs));
    expect(optimizer.population()).toHaveLength(6);
    expect(() => new Nsga2(problem.problem, { populationSize: 1, seed: 1 })).toThrow();
    expect(() => new Nsga2({ variables: [{ name: 'n', kind: 'integer', lower: 0.5, upper: 3 }], objectives: [{ name: 'f', sense: 'min' }] }, { populationSize: 4, seed: 1 })).toThrow();
  });
});

describe('external archive', () => {
  it('the search is unchanged by the archive: populations match digests recorded before the archive was added', async () => {
    // Digests of every generation's population (design, objectives, violation, rank, crowding
    // bits), recorded with the optimizer as it was before the archive existed. The archive is
    // only written by tell() and read by archive()/snapshot(); nothing in the search reads it.
    const recorded: [string, TestProblem, number, number, number, string][] = [
      ['ZDT1', zdt1(), 7, 40, 30, '83d8788cc2e778d0a564596c60ac5b0238a00587273c5ce789cfbaa381f24c9f'],
      ['ZDT3', zdt3(), 11, 30, 25, '54200075b89c599c2a63694e966d472487c8e424bb5c7ef50bce520fdbbe0357'],
      ['DTLZ2', dtlz2(3), 3, 40, 20, 'f26aade946fe1b8d5dfd737c1bfe9dd3b6d6fe619fb054e5b88d67a23f8857fa'],
      ['CONSTR', constr(), 5, 20, 30, '36233e8242d8610d12ee133464e71d8e1cb45f99bcadfecd9d7a86d7f31750ac'],
    ];
    for (const [name, testProblem, seed, populationSize, generations, digest] of recorded) {
      const hash = createHash('sha256');
      await optimize(testProblem.problem, testProblem.evaluate, {
        populationSize,
        seed,
        termination: { generations },
        onGeneration: ({ population }) => {
          for (const member of population) {
            hash.update(Buffer.from(member.design.buffer, member.design.byteOffset, member.design.byteLength));
            const numbers = Float64Array.from([...member.evaluation.objectives, member.evaluation.violation, member.rank, member.crowding]);
            hash.update(Buffer.from(numbers.buffer));
          }
        },
      });
      expect(`${name} ${hash.digest('hex')}`).toBe(`${name} ${digest}`);
    }
  });

  it('holds exactly the non-dominated feasible designs of everything told, first of equals, in order of telling', async () => {
    const told: { design: Float64Array; evaluation: Evaluation }[] = [];
    const recordingEvaluate: BatchEvaluate = async (designs) => {
      const evaluations = await mixedEvaluate(designs);
      designs.forEach((design, j) => told.push({ design: design.slice(), evaluation: sanitizeEvaluation(evaluations[j]!, 2) }));
      return evaluations;
    };
    const { archive, front } = await optimize(mixedProblem, recordingEvaluate, { populationSize: 24, seed: 4, termination: { generations: 25 } });
    expect(told.length).toBe(24 * 26);
    // Brute force in minimisation form ('benefit' is maximised).
    const minimised = told.map(({ evaluation }) => [evaluation.objectives[0]!, -evaluation.objectives[1]!]);
    const feasible = told.map(({ evaluation }) => evaluation.failed === undefined && evaluation.violation === 0);
    const expected: number[] = [];
    for (let i = 0; i < told.length; i++) {
      if (!feasible[i]) continue;
      const [a0, a1] = minimised[i]! as [number, number];
      const beaten = minimised.some(([b0, b1], j) => feasible[j] && j !== i && b0! <= a0 && b1! <= a1 && (b0 !== a0 || b1 !== a1 || j < i));
      if (!beaten) expected.push(i);
    }
    expect(told.some((entry) => entry.evaluation.failed !== undefined)).toBe(true);
    expect(told.some((entry) => entry.evaluation.violation > 0 && entry.evaluation.failed === undefined)).toBe(true);
    expect(archive.map((member) => bits(member.design))).toEqual(expected.map((i) => bits(told[i]!.design)));
    expect(archive.map((member) => member.evaluation)).toEqual(expected.map((i) => told[i]!.evaluation));
    // Every member of the final front is matched or dominated by an archive member.
    for (const member of front) {
      expect(archive.some((kept) => kept.evaluation.objectives[0]! <= member.evaluation.objectives[0]! && kept.evaluation.objectives[1]! >= member.evaluation.objectives[1]!)).toBe(true);
    }
  });

  it('a resumed run has the identical archive; a snapshot without an archive rebuilds it from its population', async () => {
    const settings = { populationSize: 20, seed: 9, termination: { generations: 20 } };
    const uninterrupted = new Map<number, string>();
    const full = await optimize(mixedProblem, mixedEvaluate, {
      ...settings,
      onGeneration: ({ generation, snapshot }) => void uninterrupted.set(generation, JSON.stringify(snapshot())),
    });
    const atTen = JSON.parse(uninterrupted.get(10)!) as Nsga2State;
    expect(atTen.archive?.members.length).toBeGreaterThan(0);
    const resumed = await optimize(mixedProblem, mixedEvaluate, { ...settings, resume: atTen });
    expect(resumed.archive.map((member) => bits(member.design))).toEqual(full.archive.map((member) => bits(member.design)));
    expect(resumed.archive.map((member) => member.evaluation)).toEqual(full.archive.map((member) => member.evaluation));

    // Old format: no archive field. The population still resumes bit for bit; the archive
    // starts from the population's non-dominated feasible members.
    const { archive: _dropped, ...withoutArchive } = atTen;
    const old: Nsga2State = withoutArchive;
    const restored = Nsga2.restore(mixedProblem, settings, old);
    const fromPopulation = new ParetoArchive(mixedProblem.objectives);
    for (const entry of old.population) fromPopulation.offer(entry.design, sanitizeEvaluation({ objectives: entry.evaluation.objectives.map((value) => value ?? Number.NaN), violation: entry.evaluation.violation ?? Number.POSITIVE_INFINITY }));
    expect(restored.archive().map((member) => bits(member.design))).toEqual(fromPopulation.members().map((member) => bits(member.design)));
    expect(restored.archive().length).toBeGreaterThan(0);
    const fromOld = await optimize(mixedProblem, mixedEvaluate, { ...settings, resume: old });
    expect(fingerprint(fromOld.population)).toBe(fingerprint(full.population));
  });
});
