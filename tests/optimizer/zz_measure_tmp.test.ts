import { it } from 'vitest';
import { hypervolume } from '../../src/optimizer/hypervolume.js';
import { optimize } from '../../src/optimizer/nsga2.js';
import { dtlz2, zdt1, zdt2, zdt3 } from '../../src/optimizer/testProblems.js';
const DEB = { populationSize: 100, crossoverProbability: 0.9, crossoverEta: 20, mutationEta: 20 };
it('measure', async () => {
  for (const [name, mk, analytic] of [['zdt1', zdt1, 2/3], ['zdt2', zdt2, 1/3], ['zdt3', zdt3, 1.044426]] as const) {
    const out: string[] = [];
    for (const seed of [1,2,3,4,5]) {
      const p = mk();
      let t = performance.now();
      const r = await optimize(p.problem, p.evaluate, { ...DEB, seed, termination: { generations: 250 } });
      const tRun = performance.now() - t; t = performance.now();
      const hv = hypervolume(r.archive.map((m) => m.evaluation.objectives), [1, 1]) / analytic;
      const hvPop = hypervolume(r.front.map((m) => m.evaluation.objectives), [1, 1]) / analytic;
      out.push(`seed ${seed}: archive ${r.archive.length} ${(100*hv).toFixed(3)}% pop ${(100*hvPop).toFixed(3)}% run ${tRun.toFixed(0)}ms hv ${(performance.now()-t).toFixed(0)}ms`);
    }
    console.log(name + '\n' + out.join('\n'));
  }
  for (const seed of [1,2,3]) {
    const p = dtlz2(3);
    let t = performance.now();
    const r = await optimize(p.problem, p.evaluate, { ...DEB, seed, termination: { generations: 250 } });
    const tRun = performance.now() - t; t = performance.now();
    const pts = r.archive.map((m) => m.evaluation.objectives);
    console.log(`dtlz2 seed ${seed}: archive ${r.archive.length} run ${tRun.toFixed(0)}ms`);
    for (const n of [250, 500, 1000]) { t = performance.now(); const h = hypervolume(pts.slice(0, n), [1,1,1]); console.log(`  hv of ${n}: ${(performance.now()-t).toFixed(0)}ms`); }
  }
}, 600000);
