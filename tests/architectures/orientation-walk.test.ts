/**
 * The range of φ holding φ_0, walked from φ_0 on the scan lattice (orientationRangeAt), against the
 * full scan of the turn (orientationRanges): the same numbers to the last bit wherever φ_0 lies in a
 * range, at points all over the reach of the three 3-DOF test models (derived here: both place their
 * boundaries by the same bisection between the same lattice angles).
 */
import { describe, expect, it } from 'vitest';
import type { LeggedModel } from '../../src/architectures/legged.js';
import { orientationRangeAt, orientationRanges, type OrientationScanOptions } from '../../src/architectures/orientation.js';
import type { PlanarArchitecture } from '../../src/architectures/types.js';
import { CASES } from './models.js';

describe('orientation range holding φ_0: walked from φ_0 = the full scan', () => {
  it('3-RRR, 3-PRR, 3-RPR test models', () => {
    let found = 0;
    let refused = 0;
    let wrapped = 0;
    for (const { architecture, input, box } of CASES.filter((c) => c.architecture.dof === 3)) {
    const arch = architecture as PlanarArchitecture<LeggedModel>;
    const model = arch.buildModel(input);
    const pose = arch.createPose();
    const full = new Float64Array(32);
    const walked = new Float64Array(2);
    for (const phi0 of [0, 0.3, 1.5, -1.5, -2.9, 2.9, 3.1]) {
      for (const step of [(3 * Math.PI) / 180, (7 * Math.PI) / 180]) {
        const options: OrientationScanOptions = { step, tolerance: 1e-7 };
        for (let j = 0; j <= 12; j++) {
          for (let i = 0; i <= 12; i++) {
            const x = box.x - box.half + (i / 12) * 2 * box.half;
            const y = box.y - box.half + (j / 12) * 2 * box.half;
            const count = orientationRanges(arch, model, pose, x, y, full, options);
            // The scan's range holding φ_0 (shifted by whole turns), if any.
            let holding = -1;
            for (let k = 0; k < count; k++) {
              const shifted = phi0 + 2 * Math.PI * Math.round((0.5 * (full[2 * k]! + full[2 * k + 1]!) - phi0) / (2 * Math.PI));
              if (shifted >= full[2 * k]! && shifted <= full[2 * k + 1]!) holding = k;
            }
            if (!orientationRangeAt(arch, model, pose, x, y, phi0, walked, options)) {
              refused++;
              continue;
            }
            found++;
            expect(holding, `(${x}, ${y}) φ0 ${phi0}`).toBeGreaterThanOrEqual(0);
            expect([walked[0], walked[1]]).toEqual([full[2 * holding]!, full[2 * holding + 1]!]);
            if (walked[1]! > Math.PI) wrapped++;
          }
        }
      }
    }
    }
    // Synthetic usable sets of φ (the acceptance rule sees the solved pose's φ): ranges around
    // centres on both sides of ±π, one with a gap narrower than a step, φ_0 in and out of them.
    const arch = CASES.find((c) => c.architecture.dof === 3)!.architecture as PlanarArchitecture<LeggedModel>;
    const model = arch.buildModel(CASES.find((c) => c.architecture.dof === 3)!.input);
    const pose = arch.createPose();
    const full = new Float64Array(32);
    const walked = new Float64Array(2);
    for (const centre of [Math.PI, -Math.PI + 0.01, Math.PI - 0.3, 0.2, -3]) {
      for (const half of [0.4, 1.3, 2.9, 3.2]) {
        for (const gap of [false, true]) {
          const accept = (p: { phi: number }): boolean => Math.cos(p.phi - centre) >= Math.cos(half) && !(gap && Math.abs(Math.sin(p.phi - centre - 0.5 * half)) < 0.01);
          const options: OrientationScanOptions = { step: (3 * Math.PI) / 180, tolerance: 1e-9, accept };
          for (const phi0 of [centre, centre + 0.5 * half, centre - 0.9 * half, centre + Math.PI]) {
            const count = orientationRanges(arch, model, pose, 0, 0, full, options);
            if (!orientationRangeAt(arch, model, pose, 0, 0, phi0, walked, options)) { refused++; continue; }
            found++;
            let holding = -1;
            for (let k = 0; k < count; k++) {
              const shifted = phi0 + 2 * Math.PI * Math.round((0.5 * (full[2 * k]! + full[2 * k + 1]!) - phi0) / (2 * Math.PI));
              if (shifted >= full[2 * k]! && shifted <= full[2 * k + 1]!) holding = k;
            }
            expect(holding, `centre ${centre} half ${half} gap ${gap} φ0 ${phi0}`).toBeGreaterThanOrEqual(0);
            expect([walked[0], walked[1]]).toEqual([full[2 * holding]!, full[2 * holding + 1]!]);
            if (walked[1]! > Math.PI) wrapped++;
          }
        }
      }
    }
    console.log(`walked ${found}, full scan ${refused}, across ±π ${wrapped}`);
    // Both paths and the join across ±π are exercised.
    expect(found).toBeGreaterThan(50);
    expect(refused).toBeGreaterThan(10);
    expect(wrapped).toBeGreaterThan(0);
  });
});
