/**
 * A margins-only pose (ArchitecturePose.marginOnly, its joint tests left at "never skip") against an
 * ordinary one at the same points, for every test model and with joint limits on the cranks: the
 * status and every input of the margins (reach, joint range, leg sines, det A, 1/κ, mechanism sine)
 * are the same numbers to the last bit (derived here: it only leaves out J, J⁻¹, J_h, J_h⁻¹; the
 * skipped angles of joints far inside their ranges are tested in tests/mechanics/margin-kernel.test.ts).
 */
import { describe, expect, it } from 'vitest';
import type { LeggedModel } from '../../src/architectures/legged.js';
import { PoseStatus, type PlanarArchitecture } from '../../src/architectures/types.js';
import { CASES, RRR3_INPUT } from './models.js';
import { rrr3 } from '../../src/architectures/rrr3.js';
import { JOINT_FAR } from '../../src/architectures/legs/crankRod.js';
import { marginJointTests } from '../../src/mechanics/workspace.js';

const limited = { ...RRR3_INPUT, jointLimits: [0, 1, 2].map(() => ({ min: -1, max: 2.5 })) };
// Ranges of 1.5 rad (a half span within JOINT_FAR: never skipped) and of 3.5 rad (skipped far inside).
const narrow = { ...RRR3_INPUT, jointLimits: [{ min: 0, max: 1.5 }, { min: 0.5, max: 2 }, { min: -1, max: 2.5 }] };
const cases = [
  ...CASES.map((c) => ({ label: c.label, architecture: c.architecture as PlanarArchitecture<LeggedModel>, input: c.input, box: c.box })),
  { label: '3-RRR with crank limits', architecture: rrr3 as PlanarArchitecture<LeggedModel>, input: limited, box: CASES.find((c) => c.label === '3-RRR')!.box },
  { label: '3-RRR with narrow crank limits, joint tests loaded', architecture: rrr3 as PlanarArchitecture<LeggedModel>, input: narrow, box: CASES.find((c) => c.label === '3-RRR')!.box },
];

describe('sampling pose = ordinary pose on every margin input', () => {
  it.each(cases)('$label', ({ architecture, input, box }) => {
    const model = architecture.buildModel(input);
    const full = architecture.createPose();
    const sampling = architecture.createPose();
    sampling.marginOnly = true;
    // The joint tests of the kernel: a joint skipped only when more than JOINT_FAR inside its range.
    if (input === narrow) sampling.jointTest.set(marginJointTests(model, 1)!);
    let compared = 0;
    let limitedOut = 0;
    for (let j = 0; j <= 16; j++) {
      for (let i = 0; i <= 16; i++) {
        const x = box.x - box.half + (i / 16) * 2 * box.half;
        const y = box.y - box.half + (j / 16) * 2 * box.half;
        const phi = architecture.dof === 3 ? ((i - j) / 16) * box.phiHalf : 0;
        const a = architecture.solvePose(model, full, x, y, phi);
        const b = architecture.solvePose(model, sampling, x, y, phi);
        expect(b).toBe(a);
        expect(sampling.reachMargin).toBe(full.reachMargin);
        if (a === PoseStatus.Unreachable) continue;
        // A skipped angle writes JOINT_FAR, a lower bound of the joint margin: equal below it.
        if (input === narrow && full.jointMargin >= JOINT_FAR) expect([JOINT_FAR, full.jointMargin]).toContain(sampling.jointMargin);
        else expect(sampling.jointMargin).toBe(full.jointMargin);
        expect([sampling.detA, sampling.inverseCondition, sampling.mechanismSine]).toEqual([full.detA, full.inverseCondition, full.mechanismSine]);
        expect(Array.from(sampling.legSine)).toEqual(Array.from(full.legSine));
        compared++;
        if (full.jointMargin < 0) limitedOut++;
      }
    }
    expect(compared).toBeGreaterThan(20);
    if (input === limited) expect(limitedOut).toBeGreaterThan(0);
  });
});
