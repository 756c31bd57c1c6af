/**
 * The margin-only point kernel (src/mechanics/workspace.ts PointKernel with marginsOnly, legs/crankRod.ts
 * skipping the angle of a joint more than 1 rad inside its range) gives bit-identical usability and
 * reach margins to the full solve, on a dense lattice over the reachable box of the five-bar and
 * 3-RRR demo baselines (invented studies), and it does skip angles there. Derived here: the skipped
 * joint margin is replaced by a lower bound of 1 rad, and every other term of the usability margin is
 * at most 1.
 */
import { describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { Evaluator } from '../../src/mechanics/evaluate.js';
import { designFromValues } from '../../src/mechanics/designSpace.js';
import { evaluationBox, PointKernel } from '../../src/mechanics/workspace.js';
import { loadStudyFile } from '../../src/study/parse.js';
import { REPO_ROOT } from '../fixtures/harness.js';

describe.each(['parcel-sorter.yaml', 'platform-3rrr.yaml'])('margin-only kernel on %s', (file) => {
  it('equals the full solve bit for bit on a 150 × 150 lattice and skips angles', () => {
    const { study } = loadStudyFile(join(REPO_ROOT, 'studies', file));
    const evaluator = new Evaluator(study);
    const { architecture, model } = evaluator.architectureDesign(designFromValues(evaluator.variables, study.baseline));
    const phi = study.orientation?.phi0 ?? 0;
    const box = evaluationBox(study, architecture, model, phi)!;
    const fullPose = architecture.createPose();
    const fastPose = architecture.createPose();
    const full = new PointKernel(study, architecture, model, fullPose, phi, false);
    const fast = new PointKernel(study, architecture, model, fastPose, phi, true);
    full.continuous = true;
    fast.continuous = true;
    let skipped = 0;
    let usable = 0;
    const n = 150;
    for (let j = 0; j <= n; j++) {
      for (let i = 0; i <= n; i++) {
        const x = box.xmin + ((box.xmax - box.xmin) * i) / n;
        const y = box.ymin + ((box.ymax - box.ymin) * j) / n;
        const a = full.sample(x, y);
        const b = fast.sample(x, y);
        expect(b).toBe(a);
        expect(Object.is(fast.usable, full.usable), `usable at (${x}, ${y})`).toBe(true);
        expect(Object.is(fast.reach, full.reach), `reach at (${x}, ${y})`).toBe(true);
        if (fastPose.q.some(Number.isNaN) && !fullPose.q.some(Number.isNaN)) skipped++;
        if (full.usable >= 0) usable++;
      }
    }
    expect(usable).toBeGreaterThan(100);
    expect(skipped).toBeGreaterThan(1000);
    // The flag is left off for the next caller of the shared pose.
    expect(fastPose.marginOnly).toBe(false);
  });
});
