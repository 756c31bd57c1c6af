/**
 * Singularity conditions, the 2-PRR reachable region against its closed form, stiffness in slider
 * units, the characteristic length of 3-DOF platforms and their orientation ranges.
 */
import { describe, expect, it } from 'vitest';
import { Matrix, inverse, EigenvalueDecomposition } from 'ml-matrix';
import { characteristicLengthForPoses, inverseConditionAtLength, optimalCharacteristicLength } from '../../src/architectures/conditioning.js';
import type { LeggedModel } from '../../src/architectures/legged.js';
import { orientationRanges, orientationRequirementMargin } from '../../src/architectures/orientation.js';
import { prr2, prr2ReachBandHalfHeight } from '../../src/architectures/prr2.js';
import { prr3 } from '../../src/architectures/prr3.js';
import { rrr3 } from '../../src/architectures/rrr3.js';
import { PoseStatus, type ArchitecturePose, type ModelInput, type PlanarArchitecture } from '../../src/architectures/types.js';
import { MarginGrid } from '../../src/mechanics/grid.js';
import { CASES, findPoses, PRR2_INPUT, PRR3_INPUT, RRR3_INPUT } from './models.js';

const measured: string[] = [];

describe('2-PRR singularities (Gosselin & Angeles 1990, IEEE Trans. Robotics and Automation 6(3): type 1 leg, type 2 mechanism)', () => {
  const railHeight = PRR2_INPUT.parameters.rail_height!;
  const d1 = PRR2_INPUT.parameters.rod_1!;

  it('leg singularity: rod 1 perpendicular to the rail exactly at |P_y − rail| = d_1, where 1/κ → 0', () => {
    const pose = prr2.createPose();
    let previous = Infinity;
    for (const eps of [1e-1, 1e-2, 1e-4, 1e-6, 1e-8]) {
      const dy = d1 * (1 - eps);
      // rod_2 = 0.3 < d_1 would make leg 2 unreachable near Δy = d_1: use a model with d_2 > d_1.
      const wide = prr2.buildModel({ ...PRR2_INPUT, parameters: { ...PRR2_INPUT.parameters, rod_2: 0.5 } });
      expect(prr2.solvePose(wide, pose, 0.01, railHeight + dy)).not.toBe(PoseStatus.Unreachable);
      // derived: u_1·e_rail = ±√(d_1² − Δy²)/d_1.
      const expected = Math.sqrt(d1 * d1 - dy * dy) / d1;
      expect(Math.abs(Math.abs(pose.legSine[0]!) - expected)).toBeLessThan(1e-12);
      expect(pose.inverseCondition).toBeLessThan(previous);
      previous = pose.inverseCondition;
    }
    expect(previous).toBeLessThan(1e-3);
    const wide = prr2.buildModel({ ...PRR2_INPUT, parameters: { ...PRR2_INPUT.parameters, rod_2: 0.5 } });
    prr2.solvePose(wide, pose, 0.01, railHeight + d1);
    expect(Math.abs(pose.legSine[0]!)).toBeLessThan(1e-7);
    expect(pose.inverseCondition).toBeLessThan(1e-7);
    expect(prr2.solvePose(wide, pose, 0.01, railHeight + d1 * (1 + 1e-9))).toBe(PoseStatus.Unreachable);
  });

  it('mechanism singularity: rods aligned (det A = 0) exactly when P is on the rail, in every working mode; locked sliders then let P move across the rail', () => {
    for (const mode of prr2.workingModes) {
      const model = prr2.buildModel({ ...PRR2_INPUT, workingMode: mode });
      const pose = prr2.createPose();
      prr2.solvePose(model, pose, 0.03, railHeight);
      // derived: Δy = 0 puts both rods on the rail line, u_i = (±1, 0).
      expect(Math.abs(pose.detA)).toBeLessThan(1e-15);
      expect(pose.inverseCondition).toBeLessThan(1e-15);
      // A (0, 1)ᵀ = 0: a vertical end-point velocity with ẋ_i = 0 (derived: rows u_iᵀ are horizontal).
      expect(Math.abs(pose.A[1]!) + Math.abs(pose.A[3]!)).toBeLessThan(1e-15);
      // det A changes sign across the rail: one assembly mode per side.
      prr2.solvePose(model, pose, 0.03, railHeight + 0.05);
      const above = Math.sign(pose.detA);
      prr2.solvePose(model, pose, 0.03, railHeight - 0.05);
      const below = Math.sign(pose.detA);
      if (mode === '-+' || mode === '+-') {
        expect(above * below).toBe(-1);
        expect(above).toBe(mode === '-+' ? 1 : -1);
      }
    }
  });
});

/** Rod line i through the distal joint along u_i. */
function rodLine(pose: ArchitecturePose, i: number): { px: number; py: number; ux: number; uy: number } {
  return { px: pose.distalJoint[2 * i]!, py: pose.distalJoint[2 * i + 1]!, ux: pose.rodDirection[2 * i]!, uy: pose.rodDirection[2 * i + 1]! };
}

describe.each([
  { label: '3-RRR', architecture: rrr3, input: RRR3_INPUT },
  { label: '3-PRR', architecture: prr3, input: PRR3_INPUT },
])('$label singularities (Gosselin & Angeles 1990)', ({ label, architecture, input }) => {
  it('leg singularity: crank–rod aligned (3-RRR) or rod ⟂ rail (3-PRR) for leg 1 gives s_1 = 0 and 1/κ = 0', () => {
    const model = architecture.buildModel(input);
    const pose = architecture.createPose();
    const b1x = model.platformX[0]!;
    const b1y = model.platformY[0]!;
    let found = 0;
    for (let k = 0; k < 72 && found < 3; k++) {
      const phi = 0.1;
      const rx = Math.cos(phi) * b1x - Math.sin(phi) * b1y;
      const ry = Math.sin(phi) * b1x + Math.cos(phi) * b1y;
      let bx: number;
      let by: number;
      const angle = (2 * Math.PI * k) / 72;
      if (model.actuators[0] === 'revolute') {
        // derived: B_1 at distance p_1 + d_1 from A_1 stretches leg 1 (crank and rod aligned).
        const reach = model.crank[0]! + model.rod[0]!;
        bx = model.baseX[0]! + reach * Math.cos(angle);
        by = model.baseY[0]! + reach * Math.sin(angle);
      } else {
        // derived: B_1 at distance d_1 from the rail line puts rod 1 perpendicular to the rail.
        const along = 0.3 * Math.cos(angle);
        const side = Math.sin(angle) >= 0 ? 1 : -1;
        bx = model.baseX[0]! + along * model.railX[0]! - side * model.rod[0]! * model.railY[0]!;
        by = model.baseY[0]! + along * model.railY[0]! + side * model.rod[0]! * model.railX[0]!;
      }
      const status = architecture.solvePose(model, pose, bx - rx, by - ry, phi);
      if (status === PoseStatus.Unreachable) continue;
      found++;
      expect(Math.abs(pose.legSine[0]!)).toBeLessThan(1e-7);
      expect(Math.abs(pose.B[0]!)).toBeLessThan(1e-7);
      expect(pose.inverseCondition).toBeLessThan(1e-7);
    }
    expect(found).toBeGreaterThanOrEqual(1);
  });

  it('mechanism singularity: where det A = 0 the three rod lines meet in one point, and locked actuators let the platform turn about it', () => {
    let checked = 0;
    let worstConcurrency = 0;
    let worstTwist = 0;
    const pose = architecture.createPose();
    for (const mode of architecture.workingModes) {
      const model = architecture.buildModel({ ...input, workingMode: mode });
      for (let row = -4; row <= 4 && checked < 24; row++) {
        const y = row * 0.04;
        const phi = 0.15 * row;
        let previousX = Number.NaN;
        let previousDet = Number.NaN;
        for (let x = -0.25; x <= 0.25; x += 0.01) {
          const status = architecture.solvePose(model, pose, x, y, phi);
          const det = status === PoseStatus.Unreachable ? Number.NaN : pose.detA;
          if (Number.isFinite(previousDet) && Number.isFinite(det) && previousDet * det < 0) {
            // Bisection on det A along x (all legs reach at both ends of the bracket).
            let a = previousX;
            let b = x;
            let fa = previousDet;
            let ok = true;
            for (let it = 0; it < 200 && b - a > 1e-15; it++) {
              const mid = 0.5 * (a + b);
              if (architecture.solvePose(model, pose, mid, y, phi) === PoseStatus.Unreachable) { ok = false; break; }
              if (pose.detA * fa > 0) { a = mid; fa = pose.detA; } else b = mid;
            }
            if (ok) {
              architecture.solvePose(model, pose, 0.5 * (a + b), y, phi);
              let legsRegular = true;
              for (let i = 0; i < 3; i++) if (Math.abs(pose.legSine[i]!) < 0.05) legsRegular = false;
              if (legsRegular) {
                // Intersection X of rod lines 1 and 2, then its distance to line 3 (derived: rows of A are
                // the rod lines' direction and moment about P; det A = 0 ⇔ the lines are concurrent or parallel).
                const l1 = rodLine(pose, 0);
                const l2 = rodLine(pose, 1);
                const l3 = rodLine(pose, 2);
                const denom = l1.ux * l2.uy - l1.uy * l2.ux;
                const t = ((l2.px - l1.px) * l2.uy - (l2.py - l1.py) * l2.ux) / denom;
                const cx = l1.px + t * l1.ux;
                const cy = l1.py + t * l1.uy;
                const distance = Math.abs((cx - l3.px) * l3.uy - (cy - l3.py) * l3.ux);
                const size = Math.max(1, Math.hypot(cx, cy));
                worstConcurrency = Math.max(worstConcurrency, distance / size);
                expect(distance / size).toBeLessThan(1e-9);
                expect(pose.inverseCondition).toBeLessThan(1e-9);
                expect(Math.abs(pose.mechanismSine)).toBeLessThan(1e-9);
                // Twist of a rotation about X: (ẋ, ẏ, φ̇) = (−(P − X)⊥ rotated…) = ((cy − y), −(cx − x), 1) gives A t ≈ 0.
                const twist = [cy - pose.y, -(cx - pose.x), 1];
                let residual = 0;
                let scale = 0;
                for (let i = 0; i < 3; i++) {
                  let s = 0;
                  for (let k = 0; k < 3; k++) s += pose.A[3 * i + k]! * twist[k]!;
                  residual = Math.max(residual, Math.abs(s));
                  scale = Math.max(scale, Math.hypot(twist[0]!, twist[1]!) + Math.abs(pose.A[3 * i + 2]!));
                }
                worstTwist = Math.max(worstTwist, residual / scale);
                expect(residual / scale).toBeLessThan(1e-9);
                checked++;
              }
            }
          }
          previousX = x;
          previousDet = det;
        }
      }
    }
    measured.push(`${label}: ${checked} type-2 singular poses found by bisection; concurrency ≤ ${worstConcurrency.toExponential(2)}, locked-actuator twist residual ≤ ${worstTwist.toExponential(2)}`);
    expect(checked).toBeGreaterThanOrEqual(3);
  });
});

describe('2-PRR reachable region', () => {
  it('unlimited rails: the band |P_y − rail| ≤ min(d_1, d_2) (derived), measured by the workspace grid over a window', () => {
    const model = prr2.buildModel(PRR2_INPUT);
    const railHeight = PRR2_INPUT.parameters.rail_height!;
    const half = prr2ReachBandHalfHeight(model);
    const width = 0.8; // window along the rail, m
    const box = prr2.reachableBox(model);
    // Unlimited rails: the box is unbounded along the rail and bounded by rail ± max over legs of … min d.
    expect(box).not.toBeNull();
    expect(box!.xmin).toBe(-Infinity);
    expect(box!.ymax).toBeCloseTo(railHeight + half, 14);
    const grid = new MarginGrid(204);
    grid.layout(-width / 2, width / 2, railHeight - 1.5 * half, railHeight + 1.5 * half, 200);
    const pose = prr2.createPose();
    for (let j = 0; j < grid.ny; j++) {
      for (let i = 0; i < grid.nx; i++) {
        const x = grid.x0 + i * grid.h;
        const y = grid.y0 + j * grid.h;
        prr2.solvePose(model, pose, x, y);
        grid.values[j * grid.nx + i] = Math.min(pose.reachMargin, x + width / 2, width / 2 - x);
      }
    }
    const area = grid.positiveArea(grid.values);
    const closedForm = width * 2 * half; // derived: band of height 2 min d_i times the window width
    const relative = Math.abs(area - closedForm) / closedForm;
    measured.push(`2-PRR band: grid ${area.toFixed(8)} m² vs closed form ${closedForm.toFixed(8)} m², relative ${relative.toExponential(2)}`);
    // Sub-cell interpolation is exact for the band's straight edges; only the four window-corner cells
    // (where the margin is the min of two linear functions) carry an error, below h² each (derived).
    expect(relative).toBeLessThan((4 * grid.h * grid.h) / closedForm);
  });

  it('limited strokes: grid area against the area integral ∫ |∩_i [a_i − σ_i h_i(y), b_i − σ_i h_i(y)]| dy, h_i = √(d_i² − Δy²) (derived)', () => {
    const strokes = [{ min: -0.5, max: 0.1 }, { min: -0.05, max: 0.55 }];
    const model = prr2.buildModel({ ...PRR2_INPUT, jointLimits: strokes });
    const d = [model.rod[0]!, model.rod[1]!];
    const sigma = [model.sigma[0]!, model.sigma[1]!];
    const half = Math.min(d[0]!, d[1]!);
    const widthAt = (dy: number): number => {
      let lo = -Infinity;
      let hi = Infinity;
      for (let i = 0; i < 2; i++) {
        const h = Math.sqrt(Math.max(d[i]! ** 2 - dy * dy, 0));
        lo = Math.max(lo, strokes[i]!.min - sigma[i]! * h);
        hi = Math.min(hi, strokes[i]!.max - sigma[i]! * h);
      }
      return Math.max(hi - lo, 0);
    };
    // Composite Simpson on 200 000 intervals over the band.
    const intervals = 200000;
    const step = (2 * half) / intervals;
    let integral = 0;
    for (let k = 0; k <= intervals; k++) {
      const w = k === 0 || k === intervals ? 1 : k % 2 === 1 ? 4 : 2;
      integral += w * widthAt(-half + k * step);
    }
    integral *= step / 3;
    const box = prr2.reachableBox(model)!;
    expect(Number.isFinite(box.xmin) && Number.isFinite(box.xmax)).toBe(true);
    const cells = 240;
    const grid = new MarginGrid(cells + 4);
    grid.layout(box.xmin, box.xmax, box.ymin, box.ymax, cells);
    const pose = prr2.createPose();
    for (let j = 0; j < grid.ny; j++) {
      for (let i = 0; i < grid.nx; i++) {
        const status = prr2.solvePose(model, pose, grid.x0 + i * grid.h, grid.y0 + j * grid.h);
        grid.values[j * grid.nx + i] = status === PoseStatus.Unreachable ? pose.reachMargin : Math.min(pose.reachMargin, pose.jointMargin);
      }
    }
    const area = grid.positiveArea(grid.values);
    const relative = Math.abs(area - integral) / integral;
    measured.push(`2-PRR strokes: grid ${area.toFixed(8)} m² (${cells} cells) vs integral ${integral.toFixed(8)} m², relative ${relative.toExponential(2)}`);
    expect(integral).toBeGreaterThan(0.05);
    expect(relative).toBeLessThan(2e-3);
  });
});

describe('stiffness in actuator units', () => {
  it.each(CASES)('$label: with rigid links K_x = J⁻ᵀ diag(k) J⁻¹ (N/m sliders, N·m/rad cranks), Schur stiffness = 1/λ_max of the translational compliance', (c) => {
    const rigid = { massPerLength: 1, area: Infinity, secondMoment: Infinity, youngsModulus: Infinity };
    const input: ModelInput = { ...c.input, rods: c.input.rods.map(() => rigid), ...(c.input.cranks ? { cranks: c.input.cranks.map(() => rigid) } : {}) };
    const model = c.architecture.buildModel(input);
    const pose = c.architecture.createPose();
    const n = model.dof;
    const poses = findPoses(c, model, 4, 3);
    expect(poses.length).toBeGreaterThanOrEqual(3);
    for (const found of poses) {
      c.architecture.solvePose(model, pose, found.x, found.y, found.phi);
      c.architecture.poseDynamics(model, pose);
      // Mechanics reference §5 (derived for sliders: a force f along u_i loads the slider by f (u_i·e_r)).
      const G = new Matrix(Array.from({ length: n }, (_, r) => Array.from({ length: n }, (_, k) => pose.Jinv[r * n + k]!)));
      const K = Matrix.diag(model.drives!.map((dr) => dr.jointStiffness));
      const expected = G.transpose().mmul(K).mmul(G);
      let diff = 0;
      let norm = 0;
      for (let r = 0; r < n; r++) for (let k = 0; k < n; k++) {
        diff += (expected.get(r, k) - pose.Kx[r * n + k]!) ** 2;
        norm += expected.get(r, k) ** 2;
      }
      expect(Math.sqrt(diff / norm)).toBeLessThan(1e-12);
      if (n === 3) {
        const C = inverse(new Matrix(Array.from({ length: 3 }, (_, r) => Array.from({ length: 3 }, (_, k) => pose.Kx[3 * r + k]!))));
        const translational = C.subMatrix(0, 1, 0, 1);
        const eig = new EigenvalueDecomposition(translational).realEigenvalues;
        // derived: a force with zero moment deflects P by C_tt f, so the weakest stiffness is 1/λ_max(C_tt).
        expect(Math.abs(pose.minStiffness - 1 / Math.max(...eig)) / pose.minStiffness).toBeLessThan(1e-9);
        expect(Math.abs(pose.rotationalStiffness - 1 / C.get(2, 2)) / pose.rotationalStiffness).toBeLessThan(1e-9);
      }
    }
  });
});

function rrr3Model(scale: number, characteristicLength?: number): LeggedModel {
  const p = RRR3_INPUT.parameters;
  const scaled: Record<string, number> = {};
  for (const [k, v] of Object.entries(p)) scaled[k] = k === 'platform_twist' ? v : v * scale;
  return rrr3.buildModel({ ...RRR3_INPUT, parameters: scaled, ...(characteristicLength !== undefined ? { characteristicLength } : {}) });
}

describe('characteristic length (3-DOF homogenised Jacobian)', () => {
  const poses = [[0.02, -0.03, 0.1], [-0.05, 0.04, -0.2], [0.06, 0.05, 0.25], [0, 0, 0]];

  it('1/κ(J_h) is the same when every length and L are given in mm instead of m (derived: J_h scales uniformly)', () => {
    const metres = rrr3Model(1, 0.09);
    const millimetres = rrr3Model(1000, 90);
    const a = rrr3.createPose();
    const b = rrr3.createPose();
    let worst = 0;
    for (const [x, y, phi] of poses) {
      expect(rrr3.solvePose(metres, a, x!, y!, phi!)).not.toBe(PoseStatus.Unreachable);
      rrr3.solvePose(millimetres, b, 1000 * x!, 1000 * y!, phi!);
      worst = Math.max(worst, Math.abs(a.inverseCondition - b.inverseCondition));
      // …but not with an unscaled L: the unhomogenised mix of m and rad is unit-dependent.
      const unscaled = inverseConditionAtLength(b.J, 0, 0.09, new Float64Array(9), new Float64Array(12));
      expect(Math.abs(unscaled - a.inverseCondition)).toBeGreaterThan(1e-3);
    }
    expect(worst).toBeLessThan(1e-12);
  });

  it('the minimiser finds the L of least κ at one pose (no scanned L does better) and scales with the unit of length', () => {
    const metres = rrr3Model(1);
    const millimetres = rrr3Model(1000);
    const pose = rrr3.createPose();
    for (const [x, y, phi] of poses) {
      const single = characteristicLengthForPoses(rrr3, metres, pose, [x!, y!, phi!], 1e-3, 10)!;
      const singleMm = characteristicLengthForPoses(rrr3, millimetres, pose, [1000 * x!, 1000 * y!, phi!], 1, 1e4)!;
      expect(Math.abs(singleMm.length / 1000 - single.length) / single.length).toBeLessThan(1e-6);
      rrr3.solvePose(metres, pose, x!, y!, phi!);
      const J = Float64Array.from(pose.J);
      const matrix = new Float64Array(9);
      const work = new Float64Array(12);
      let bestScanned = 0;
      for (let k = 0; k <= 4000; k++) {
        const L = 1e-3 * 10 ** (4 * k / 4000);
        bestScanned = Math.max(bestScanned, inverseConditionAtLength(J, 0, L, matrix, work));
      }
      expect(single.meanInverseCondition).toBeGreaterThanOrEqual(bestScanned - 1e-12);
      // Local optimality: small steps either side do not improve.
      for (const f of [0.999, 1.001]) {
        expect(inverseConditionAtLength(J, 0, single.length * f, matrix, work)).toBeLessThanOrEqual(single.meanInverseCondition + 1e-15);
      }
      measured.push(`3-RRR L* at (${x}, ${y}, ${phi}): ${single.length.toFixed(6)} m, 1/κ = ${single.meanInverseCondition.toFixed(6)} (best of 4001 scanned ${bestScanned.toFixed(6)}); mm model L* = ${singleMm.length.toFixed(3)} mm`);
    }
    // Over the set: maximises the mean 1/κ.
    const set = characteristicLengthForPoses(rrr3, metres, pose, poses.flat(), 1e-3, 10)!;
    const stacked = new Float64Array(9 * poses.length);
    poses.forEach(([x, y, phi], k) => {
      rrr3.solvePose(metres, pose, x!, y!, phi!);
      stacked.set(pose.J, 9 * k);
    });
    const again = optimalCharacteristicLength(stacked, poses.length, 1e-3, 10);
    expect(Math.abs(again.length - set.length) / set.length).toBeLessThan(1e-9);
    const matrix = new Float64Array(9);
    const work = new Float64Array(12);
    const meanAt = (L: number): number => {
      let s = 0;
      for (let k = 0; k < poses.length; k++) s += inverseConditionAtLength(stacked, 9 * k, L, matrix, work);
      return s / poses.length;
    };
    for (const f of [0.5, 0.9, 0.99, 1.01, 1.1, 2]) expect(meanAt(set.length * f)).toBeLessThanOrEqual(set.meanInverseCondition + 1e-15);
  });
});

describe('orientation range at a point (3-DOF)', () => {
  it.each([
    { label: '3-RRR', architecture: rrr3 as PlanarArchitecture<LeggedModel>, input: RRR3_INPUT },
    { label: '3-PRR', architecture: prr3 as PlanarArchitecture<LeggedModel>, input: PRR3_INPUT },
  ])('$label: scanned-and-bisected ranges agree with a fine brute-force scan; the φ_0 ± Δφ margin is exact', ({ label, architecture, input }) => {
    const model = architecture.buildModel(input);
    const pose = architecture.createPose();
    const ranges = new Float64Array(16);
    for (const [x, y] of [[0, 0], [0.03, -0.02], [-0.05, 0.04]]) {
      const count = orientationRanges(architecture, model, pose, x!, y!, ranges, { step: (3 * Math.PI) / 180 });
      expect(count).toBeGreaterThanOrEqual(1);
      for (let k = 0; k < count; k++) {
        const lo = ranges[2 * k]!;
        const hi = ranges[2 * k + 1]!;
        expect(hi).toBeGreaterThan(lo);
        // Inside just within each boundary, outside just beyond (boundaries to 1e-9 rad).
        expect(architecture.solvePose(model, pose, x!, y!, lo + 1e-7)).toBe(PoseStatus.Assembled);
        expect(architecture.solvePose(model, pose, x!, y!, hi - 1e-7)).toBe(PoseStatus.Assembled);
        if (hi - lo < 2 * Math.PI - 1e-6) {
          const before = architecture.solvePose(model, pose, x!, y!, lo - 1e-7);
          const regularBefore = before === PoseStatus.Assembled && pose.inverseCondition > 0;
          expect(regularBefore).toBe(false);
          const after = architecture.solvePose(model, pose, x!, y!, hi + 1e-7);
          expect(after === PoseStatus.Assembled && pose.inverseCondition > 0).toBe(false);
        }
      }
      // Brute force at 0.01°: total measure of assembled orientations.
      let inside = 0;
      const samples = 36000;
      for (let s = 0; s < samples; s++) {
        const phi = -Math.PI + (2 * Math.PI * (s + 0.5)) / samples;
        if (architecture.solvePose(model, pose, x!, y!, phi) === PoseStatus.Assembled && pose.inverseCondition > 0) inside++;
      }
      let measure = 0;
      for (let k = 0; k < count; k++) measure += ranges[2 * k + 1]! - ranges[2 * k]!;
      const bruteMeasure = (2 * Math.PI * inside) / samples;
      measured.push(`${label} at (${x}, ${y}): ${count} range(s), total ${((measure * 180) / Math.PI).toFixed(4)}°, brute force ${((bruteMeasure * 180) / Math.PI).toFixed(4)}°`);
      expect(Math.abs(measure - bruteMeasure)).toBeLessThan((4 * 2 * Math.PI) / samples);
      // Requirement margin (derived: distance of the demanded interval's ends to the range's ends).
      const lo = ranges[0]!;
      const hi = ranges[1]!;
      const centre = 0.5 * (lo + hi);
      const halfWidth = 0.5 * (hi - lo);
      if (hi - lo < 2 * Math.PI - 1e-6) {
        expect(orientationRequirementMargin(ranges, 1, centre, 0.5 * halfWidth)).toBeCloseTo(0.5 * halfWidth, 12);
        expect(orientationRequirementMargin(ranges, 1, centre + 0.25 * halfWidth, 0.5 * halfWidth)).toBeCloseTo(0.25 * halfWidth, 12);
        expect(orientationRequirementMargin(ranges, 1, centre, 1.1 * halfWidth)).toBeLessThan(0);
        expect(orientationRequirementMargin(ranges, 1, centre + 2 * Math.PI, 0.5 * halfWidth)).toBeCloseTo(0.5 * halfWidth, 12);
      }
    }
  });
});

describe('report', () => {
  it('prints the measured values', () => {
    for (const line of measured) console.info(line);
    expect(measured.length).toBeGreaterThan(0);
  });
});
