/**
 * Five-bar pose kinematics, dynamics and stiffness (the closed forms of the former five-bar engine,
 * tests/helpers/fiveBarClosedForm.ts, with its model built there from a study where one is involved) against closed forms, published results
 * and finite differences. Every expected value names its source beside the assertion.
 */
import { describe, expect, it } from 'vitest';
import { CholeskyDecomposition, EigenvalueDecomposition, Matrix } from 'ml-matrix';
import {
  FiveBarPose,
  PoseStatus,
  WORKING_MODES,
  forwardKinematics,
  poseDynamics,
  solvePose,
  type FiveBarModel,
  type WorkingMode,
} from '../helpers/fiveBarClosedForm.js';
import {
  linkageState,
  makeFiveBarModel,
  massiveAsymmetricFiveBar,
  modelOfStudy,
  potentialEnergy,
  seededRandom,
  sigmaOf,
  studyFromParts,
  symmetricFiveBar,
  symmetricGeometry,
  withModes,
} from '../helpers/fivebarModels.js';

const SQRT2 = Math.SQRT2;
const ASSEMBLIES: readonly (1 | -1)[] = [1, -1];

/** Angle difference wrapped to (−π, π], rad. */
function wrapAngle(angle: number): number {
  let a = angle % (2 * Math.PI);
  if (a > Math.PI) a -= 2 * Math.PI;
  if (a <= -Math.PI) a += 2 * Math.PI;
  return a;
}

/**
 * End points where the model is assembled, well away from both singularity kinds
 * (|s_i| and |det A| above `clearance`), drawn uniformly from a box around the base.
 */
function sampleAssembledPoints(model: FiveBarModel, count: number, seed: number, clearance = 0.15): { x: number; y: number }[] {
  const random = seededRandom(seed);
  const pose = new FiveBarPose();
  const reach = Math.max(model.crank[0] + model.rod[0], model.crank[1] + model.rod[1]);
  const out: { x: number; y: number }[] = [];
  for (let attempt = 0; attempt < 200_000 && out.length < count; attempt++) {
    const x = (random() * 2 - 1) * reach;
    const y = (random() * 2 - 1) * reach;
    if (solvePose(model, pose, x, y) !== PoseStatus.Assembled) continue;
    if (Math.abs(pose.s1) < clearance || Math.abs(pose.s2) < clearance || Math.abs(pose.detA) < clearance) continue;
    out.push({ x, y });
  }
  return out;
}

/** Asserts |actual/expected − 1| < tolerance, with both numbers in the failure message. */
function expectRelative(actual: number, expected: number, tolerance: number): void {
  expect(Math.abs(actual / expected - 1), `${actual} vs ${expected}`).toBeLessThan(tolerance);
}

/** Frobenius norm of a 2×2 matrix given row-major. */
function norm2x2(a: number, b: number, c: number, d: number): number {
  return Math.sqrt(a * a + b * b + c * c + d * d);
}

// ---------------------------------------------------------------------------------------------
// Isotropy
// ---------------------------------------------------------------------------------------------

describe('isotropic pose of a symmetric five-bar', () => {
  /*
   * Derived. Pivots A_1 = (−s/2, 0), A_2 = (s/2, 0) with s = √2 (d − p), d > p. Take rods
   * u_1 = (1, 1)/√2 and u_2 = (−1, 1)/√2 (±45° to the vertical) and cranks perpendicular to them,
   * e_1 = (−1, 1)/√2, e_2 = (1, 1)/√2. Loop closure A_1 + p e_1 + d u_1:
   *   x = −(d − p)/√2 − p/√2 + d/√2 = 0,   y = (p + d)/√2   ⇒ P = (0, (p + d)/√2), and the mirror
   * image closes leg 2. Working mode: cross(P − A_1, e_1) = d > 0 ⇒ σ_1 = +1 and
   * cross(P − A_2, e_2) = −d < 0 ⇒ σ_2 = −1, i.e. "+-". det A = cross(u_1, u_2) = +1 ⇒ assembly "+".
   * Then s_1 = cross(e_1, u_1) = −1, s_2 = +1, rows of J⁻¹ are u_iᵀ/(p s_i): orthogonal, both of norm
   * 1/p ⇒ κ(J) = 1.
   */
  const designs: readonly { crank: number; rod: number }[] = [
    { crank: 0.2, rod: 0.35 },
    { crank: 0.12, rod: 0.4 },
    { crank: 0.3, rod: 0.31 },
  ];
  for (const { crank, rod } of designs) {
    it(`κ(J) = 1 for p = ${crank} m, d = ${rod} m in mode "+-", assembly "+"`, () => {
      const span = SQRT2 * (rod - crank);
      const model = symmetricFiveBar(crank, rod, span, '+-', 1);
      const pose = new FiveBarPose();
      const y = (crank + rod) / SQRT2;
      expect(solvePose(model, pose, 0, y)).toBe(PoseStatus.Assembled);
      // Derived (comment above): s_1 = −1, s_2 = +1, det A = +1, crank 1 at 135°, crank 2 at 45°.
      expect(pose.s1).toBeCloseTo(-1, 12);
      expect(pose.s2).toBeCloseTo(1, 12);
      expect(pose.detA).toBeCloseTo(1, 12);
      expect(pose.theta1).toBeCloseTo((3 * Math.PI) / 4, 12);
      expect(pose.theta2).toBeCloseTo(Math.PI / 4, 12);
      // Derived: κ(J) = 1. Tolerance 1e-7, not 1e-12: the closed form in linalg2 takes a square root
      // of F² − 4 det², which cancels at κ = 1, so rounding of order 1e-16 shows as ~1e-8 there
      // (measured 1.5e-8 for p = 0.3, d = 0.31; see linalg2.test.ts).
      expect(pose.inverseCondition).toBeGreaterThan(1 - 1e-7);
      expect(pose.inverseCondition).toBeLessThanOrEqual(1 + 1e-12);
      // Derived: J = p · (orthogonal matrix) there, so its largest singular value is p (same
      // square-root cancellation as above, hence 1e-7).
      poseDynamics(model, pose);
      expectRelative(pose.maxSingularValue, crank, 1e-7);
      // Derived: κ ≥ 1 everywhere, so nearby poses are worse-conditioned.
      for (const [dx, dy] of [[0.01, 0], [-0.01, 0], [0, 0.01], [0, -0.01]] as const) {
        solvePose(model, pose, dx, y + dy);
        expect(pose.inverseCondition).toBeLessThan(1 - 1e-6);
      }
    });
  }

  it('the mirror image (y → −y) is isotropic in mode "-+", assembly "-"', () => {
    // Derived: reflecting the plane flips every cross product, hence both σ_i and sign(det A).
    const crank = 0.2;
    const rod = 0.35;
    const model = symmetricFiveBar(crank, rod, SQRT2 * (rod - crank), '-+', -1);
    const pose = new FiveBarPose();
    expect(solvePose(model, pose, 0, -(crank + rod) / SQRT2)).toBe(PoseStatus.Assembled);
    expect(pose.detA).toBeCloseTo(-1, 12);
    expect(pose.inverseCondition).toBeGreaterThan(1 - 1e-7);
  });
});

// ---------------------------------------------------------------------------------------------
// Singularities
// ---------------------------------------------------------------------------------------------

// Gosselin & Angeles 1990, "Singularity analysis of closed-loop kinematic chains", IEEE Trans. Robotics
// and Automation 6(3): the two singularity kinds of closed chains (from memory).
describe('singularities (Gosselin & Angeles 1990, "Singularity analysis of closed-loop kinematic chains", IEEE Trans. Robotics and Automation 6(3))', () => {
  it('rods collinear: det A → 0 and 1/κ → 0 (type-2, parallel singularity)', () => {
    /*
     * Symmetric p = 0.25, d = 0.3, s = 0.15. With P = (0, y*) and C_1 = (−d, y*), C_2 = (d, y*) the rods
     * are both horizontal; |C_1 − A_1| = p gives y* = √(p² − (d − s/2)²) (derived).
     */
    const crank = 0.25;
    const rod = 0.3;
    const span = 0.15;
    const model = symmetricFiveBar(crank, rod, span, '+-', 1);
    const ySingular = Math.sqrt(crank ** 2 - (rod - span / 2) ** 2);
    const pose = new FiveBarPose();
    let previous = Infinity;
    for (const offset of [1e-2, 1e-3, 1e-4, 1e-5, 1e-6]) {
      solvePose(model, pose, 0, ySingular + offset);
      // Gosselin & Angeles 1990: 1/κ falls toward 0 on approach (here linearly in the distance).
      expect(pose.inverseCondition).toBeLessThan(previous);
      expect(pose.inverseCondition).toBeLessThan(5 * offset);
      previous = pose.inverseCondition;
    }
    expect(solvePose(model, pose, 0, ySingular)).not.toBe(PoseStatus.Unreachable);
    // Gosselin & Angeles 1990: on the singularity det A = 0 and 1/κ = 0 (to rounding).
    expect(Math.abs(pose.detA)).toBeLessThan(1e-12);
    expect(pose.inverseCondition).toBeLessThan(1e-12);
    // The legs themselves are regular there (it is the type-2 kind only).
    expect(Math.abs(pose.s1)).toBeGreaterThan(0.4);
    // Derived: det A = 2 u_x u_y on the symmetry axis and u_y changes sign, so crossing the
    // singularity switches the assembly mode.
    expect(solvePose(model, pose, 0, ySingular + 1e-4)).toBe(PoseStatus.Assembled);
    expect(pose.detA).toBeGreaterThan(0);
    expect(solvePose(model, pose, 0, ySingular - 1e-4)).toBe(PoseStatus.WrongAssembly);
    expect(pose.detA).toBeLessThan(0);
  });

  const legCases: readonly { name: string; radius: (p: number, d: number) => number; direction: number }[] = [
    { name: 'stretched (ρ_1 = p + d)', radius: (p, d) => p + d, direction: Math.PI / 3 },
    { name: 'folded (ρ_1 = d − p)', radius: (p, d) => d - p, direction: Math.PI / 2 },
  ];
  for (const legCase of legCases) {
    it(`crank and rod collinear, leg 1 ${legCase.name}: s_1 → 0 and 1/κ → 0 (type-1, serial singularity)`, () => {
      const crank = 0.2;
      const rod = 0.3;
      const model = symmetricFiveBar(crank, rod, 0.15, '+-', 1);
      const pose = new FiveBarPose();
      const radius = legCase.radius(crank, rod);
      const inward = legCase.name.startsWith('stretched') ? -1 : 1;
      const ux = Math.cos(legCase.direction);
      const uy = Math.sin(legCase.direction);
      let previous = Infinity;
      for (const gap of [1e-2, 1e-4, 1e-6, 1e-8]) {
        const rho = radius + inward * gap;
        solvePose(model, pose, model.pivotX[0] + rho * ux, model.pivotY[0] + rho * uy);
        expect(pose.inverseCondition).toBeLessThan(previous);
        previous = pose.inverseCondition;
      }
      // At 1e-8 m from the boundary |s_1| ~ √gap: both |s_1| and 1/κ are small (Gosselin & Angeles 1990).
      expect(Math.abs(pose.s1)).toBeLessThan(1e-3);
      expect(pose.inverseCondition).toBeLessThan(1e-3);
      // Exactly on the boundary circle: s_1 = 0 and 1/κ = 0 to rounding; leg 2 stays regular.
      expect(solvePose(model, pose, model.pivotX[0] + radius * ux, model.pivotY[0] + radius * uy)).not.toBe(PoseStatus.Unreachable);
      expect(Math.abs(pose.s1)).toBeLessThan(1e-7);
      expect(pose.inverseCondition).toBeLessThan(1e-6);
      expect(Math.abs(pose.s2)).toBeGreaterThan(0.1);
    });
  }
});

// ---------------------------------------------------------------------------------------------
// Forward and inverse kinematics
// ---------------------------------------------------------------------------------------------

describe('forward and inverse kinematics agree', () => {
  for (const mode of WORKING_MODES) {
    for (const assembly of ASSEMBLIES) {
      it(`FK(IK(P)) = P in working mode "${mode}", assembly ${assembly > 0 ? '+' : '-'} (derived)`, () => {
        const model = massiveAsymmetricFiveBar(mode, assembly);
        const points = sampleAssembledPoints(model, 40, 17 + mode.charCodeAt(0) + 3 * mode.charCodeAt(1) + assembly, 0.05);
        expect(points.length).toBe(40);
        const pose = new FiveBarPose();
        const out = new Float64Array(2);
        for (const { x, y } of points) {
          solvePose(model, pose, x, y);
          // Derived: the leg's working mode is the side of r_i the crank lies on, σ_i = sign(cross(r_i, e_i)).
          const [sigma1, sigma2] = sigmaOf(mode);
          expect(Math.sign((x - model.pivotX[0]) * pose.e1y - (y - model.pivotY[0]) * pose.e1x)).toBe(sigma1);
          expect(Math.sign((x - model.pivotX[1]) * pose.e2y - (y - model.pivotY[1]) * pose.e2x)).toBe(sigma2);
          // Derived: every link has its length.
          expect(Math.hypot(pose.c1x - x, pose.c1y - y)).toBeCloseTo(model.rod[0], 12);
          expect(Math.hypot(pose.c2x - x, pose.c2y - y)).toBeCloseTo(model.rod[1], 12);
          expect(forwardKinematics(model, pose.theta1, pose.theta2, out)).toBe(true);
          // Derived: FK of the IK angles in the same assembly mode returns the end point.
          expect(Math.hypot(out[0]! - x, out[1]! - y)).toBeLessThan(1e-10);
        }
      });
    }
  }

  it('IK(FK(θ)) = θ for random angles, both assembly modes, every working mode (derived)', () => {
    const random = seededRandom(4242);
    const base = massiveAsymmetricFiveBar();
    const pose = new FiveBarPose();
    const out = new Float64Array(2);
    const seen = new Map<string, number>();
    let checked = 0;
    for (let attempt = 0; attempt < 4000; attempt++) {
      const theta1 = (random() * 2 - 1) * Math.PI;
      const theta2 = (random() * 2 - 1) * Math.PI;
      const assembly = random() < 0.5 ? 1 : -1;
      const fkModel = withModes(base, '+-', assembly);
      if (!forwardKinematics(fkModel, theta1, theta2, out)) continue;
      const x = out[0]!;
      const y = out[1]!;
      // Working mode of this configuration: σ_i = sign(cross(P − A_i, e(θ_i))) (derived from the IK formula).
      const side1 = (x - base.pivotX[0]) * Math.sin(theta1) - (y - base.pivotY[0]) * Math.cos(theta1);
      const side2 = (x - base.pivotX[1]) * Math.sin(theta2) - (y - base.pivotY[1]) * Math.cos(theta2);
      if (Math.abs(side1) < 1e-3 || Math.abs(side2) < 1e-3) continue; // too close to a leg singularity
      const mode = `${side1 > 0 ? '+' : '-'}${side2 > 0 ? '+' : '-'}` as WorkingMode;
      const model = withModes(base, mode, assembly);
      const status = solvePose(model, pose, x, y);
      if (Math.abs(pose.detA) < 1e-3) continue; // too close to a type-2 singularity
      // Derived: det A = cross(C_2 − C_1, P − C_1)/(d_1 d_2), the sign FK picks the side with.
      expect(status).toBe(PoseStatus.Assembled);
      expect(Math.abs(wrapAngle(pose.theta1 - theta1))).toBeLessThan(1e-8);
      expect(Math.abs(wrapAngle(pose.theta2 - theta2))).toBeLessThan(1e-8);
      const key = `${mode}${assembly}`;
      seen.set(key, (seen.get(key) ?? 0) + 1);
      checked++;
    }
    expect(checked).toBeGreaterThan(500);
    expect(seen.size).toBe(8); // all four working modes in both assembly modes
  });

  it('points outside either annulus are unreachable, with a negative reach margin equal to the distance outside', () => {
    const model = symmetricFiveBar(0.2, 0.3, 0.15);
    const pose = new FiveBarPose();
    // Derived: 0.51 m from A_1 = (−0.075, 0), i.e. 0.01 m beyond leg 1's outer circle, while
    // 0.36 m from A_2 lies 0.14 m inside leg 2's annulus: the margin is the smaller, −0.01 m.
    expect(solvePose(model, pose, 0.435, 0)).toBe(PoseStatus.Unreachable);
    expect(pose.reachMargin).toBeCloseTo(-0.01, 12);
    // Derived: 0.08 m from A_2 is 0.02 m inside leg 2's inner circle (radius d − p = 0.1 m); leg 1 has 0.07 m to spare.
    expect(solvePose(model, pose, 0.075, 0.08)).toBe(PoseStatus.Unreachable);
    expect(pose.reachMargin).toBeCloseTo(-0.02, 12);
  });
});

describe('joint limits', () => {
  it('a crank angle outside its range gives OutsideJointLimits with the signed margin, wrap-around included (derived)', () => {
    const crank = 0.2;
    const rod = 0.35;
    const y = (crank + rod) / SQRT2; // the isotropic pose: θ_1 = 135°, θ_2 = 45°
    const deg = Math.PI / 180;
    const pose = new FiveBarPose();
    const base = symmetricFiveBar(crank, rod, SQRT2 * (rod - crank));
    // θ_1 = 135° lies 45° above a 0°..90° range.
    const limited: FiveBarModel = { ...base, jointLimits: [{ min: 0, max: 90 * deg }, null] };
    expect(solvePose(limited, pose, 0, y)).toBe(PoseStatus.OutsideJointLimits);
    expect(pose.jointMargin).toBeCloseTo(-45 * deg, 12);
    // 100°..150° holds it with 15° to spare; the unlimited joint does not count.
    const inside: FiveBarModel = { ...base, jointLimits: [{ min: 100 * deg, max: 150 * deg }, null] };
    expect(solvePose(inside, pose, 0, y)).toBe(PoseStatus.Assembled);
    expect(pose.jointMargin).toBeCloseTo(15 * deg, 12);
    // A range given across ±180°: 30°..60° written as −330°..−300° still holds θ_2 = 45°.
    const wrapped: FiveBarModel = { ...base, jointLimits: [null, { min: -330 * deg, max: -300 * deg }] };
    expect(solvePose(wrapped, pose, 0, y)).toBe(PoseStatus.Assembled);
    expect(pose.jointMargin).toBeCloseTo(15 * deg, 12);
    expect(base.jointLimits).toEqual([null, null]);
    expect(solvePose(base, pose, 0, y)).toBe(PoseStatus.Assembled);
    expect(pose.jointMargin).toBe(Infinity);
  });
});

// ---------------------------------------------------------------------------------------------
// Jacobian
// ---------------------------------------------------------------------------------------------

describe('Jacobian', () => {
  for (const mode of WORKING_MODES) {
    it(`J equals a central finite difference of FK and J·J⁻¹ = I, mode "${mode}" (derived)`, () => {
      for (const assembly of ASSEMBLIES) {
        const model = massiveAsymmetricFiveBar(mode, assembly);
        const points = sampleAssembledPoints(model, 15, 99 + mode.charCodeAt(1) + assembly);
        expect(points.length).toBe(15);
        const pose = new FiveBarPose();
        const plus = new Float64Array(2);
        const minus = new Float64Array(2);
        const step = 1e-6;
        for (const { x, y } of points) {
          solvePose(model, pose, x, y);
          const { theta1, theta2, j11, j12, j21, j22, g11, g12, g21, g22 } = pose;
          forwardKinematics(model, theta1 + step, theta2, plus);
          forwardKinematics(model, theta1 - step, theta2, minus);
          const f11 = (plus[0]! - minus[0]!) / (2 * step);
          const f21 = (plus[1]! - minus[1]!) / (2 * step);
          forwardKinematics(model, theta1, theta2 + step, plus);
          forwardKinematics(model, theta1, theta2 - step, minus);
          const f12 = (plus[0]! - minus[0]!) / (2 * step);
          const f22 = (plus[1]! - minus[1]!) / (2 * step);
          // Derived: Ṗ = J θ̇, so ∂P/∂θ_j is column j of J (relative 1e-6).
          const error = norm2x2(j11 - f11, j12 - f12, j21 - f21, j22 - f22);
          expect(error / norm2x2(j11, j12, j21, j22)).toBeLessThan(1e-6);
          // Derived: J⁻¹ is the inverse of J.
          const scale = norm2x2(j11, j12, j21, j22) * norm2x2(g11, g12, g21, g22);
          expect(Math.abs(j11 * g11 + j12 * g21 - 1)).toBeLessThan(1e-13 * scale);
          expect(Math.abs(j11 * g12 + j12 * g22)).toBeLessThan(1e-13 * scale);
          expect(Math.abs(j21 * g11 + j22 * g21)).toBeLessThan(1e-13 * scale);
          expect(Math.abs(j21 * g12 + j22 * g22 - 1)).toBeLessThan(1e-13 * scale);
        }
      }
    });
  }
});

// ---------------------------------------------------------------------------------------------
// Statics and dynamics
// ---------------------------------------------------------------------------------------------

describe('statics', () => {
  it('payload only: τ_g = Jᵀ F with F = −m γ, the force that holds the payload against its weight m γ', () => {
    // Craig, Introduction to Robotics: Mechanics and Control, 3rd ed., ch. 5, static forces: τ = Jᵀ F
    // (from memory). τ_g is the holding torque, so F is the force the end point applies to the payload:
    // minus its weight.
    const mass = 1.3;
    const gravity: readonly [number, number] = [0.7, -9.81];
    for (const mode of WORKING_MODES) {
      const model = makeFiveBarModel({ ...massiveAsymmetricFiveBarGeometry(), workingMode: mode, endMass: mass, gravity });
      const pose = new FiveBarPose();
      for (const { x, y } of sampleAssembledPoints(model, 10, 5 + mode.charCodeAt(0))) {
        solvePose(model, pose, x, y);
        poseDynamics(model, pose);
        const fx = -mass * gravity[0];
        const fy = -mass * gravity[1];
        const tau1 = pose.j11 * fx + pose.j21 * fy;
        const tau2 = pose.j12 * fx + pose.j22 * fy;
        const scale = Math.hypot(tau1, tau2);
        expect(Math.abs(pose.tauG1 - tau1)).toBeLessThan(1e-12 * scale);
        expect(Math.abs(pose.tauG2 - tau2)).toBeLessThan(1e-12 * scale);
      }
    }
  });

  it('uniform bar about one end (study-built crank): I = m L²/3 and holding torque m g (L/2) cos θ', () => {
    // Meriam & Kraige, Engineering Mechanics: Dynamics, mass-moment table: slender bar about one end
    // I = m L²/3 (from memory); its weight m g at L/2 needs a holding torque m g (L/2) cos θ (statics).
    const massPerLength = 1.7; // kg/m
    const length1 = 0.2;
    const length2 = 0.26;
    const study = studyFromParts({
      geometry: `{ base_span: 0.1, crank_1: ${length1}, rod_1: 0.3, crank_2: ${length2}, rod_2: 0.3 }`,
      mass: `{ cranks: { mass_per_length: ${massPerLength} }, rods: { mass_per_length: 0 } }`,
      gravity: 'vertical',
    });
    const model = modelOfStudy(study);
    const standardGravity = 9.80665; // m/s², conventional standard gravity (common practice, no source)
    const pose = new FiveBarPose();
    const points = sampleAssembledPoints(model, 12, 31);
    expect(points.length).toBe(12);
    for (const { x, y } of points) {
      solvePose(model, pose, x, y);
      poseDynamics(model, pose);
      const m1 = massPerLength * length1;
      const m2 = massPerLength * length2;
      expect(pose.d11).toBeCloseTo((m1 * length1 ** 2) / 3, 14);
      expect(pose.d22).toBeCloseTo((m2 * length2 ** 2) / 3, 14);
      expect(pose.d12).toBe(0);
      expect(pose.tauG1).toBeCloseTo(m1 * standardGravity * (length1 / 2) * Math.cos(pose.theta1), 12);
      expect(pose.tauG2).toBeCloseTo(m2 * standardGravity * (length2 / 2) * Math.cos(pose.theta2), 12);
    }
  });

  it('elbow hub on the crank: a point mass m_h at L adds m_h L² and m_h g L cos θ (derived)', () => {
    const study = studyFromParts({
      geometry: symmetricGeometry(0.2, 0.3, 0.1),
      mass: '{ cranks: { mass_per_length: 0 }, rods: { mass_per_length: 0 }, elbow_hubs: 0.4 }',
    });
    const model = modelOfStudy(study);
    const pose = new FiveBarPose();
    solvePose(model, pose, 0.05, 0.3);
    poseDynamics(model, pose);
    expect(pose.d11).toBeCloseTo(0.4 * 0.2 ** 2, 14);
    expect(pose.tauG1).toBeCloseTo(0.4 * 9.80665 * 0.2 * Math.cos(pose.theta1), 12);
  });

  for (const mode of WORKING_MODES) {
    it(`virtual work: τ_g · δθ = −Σ m_k γ · δr_k for the full model, mode "${mode}" (derived)`, () => {
      // Derived: U(θ) = −Σ m_k γ·r_k(θ); the holding torque balances gravity, τ_g = ∂U/∂θ.
      for (const assembly of ASSEMBLIES) {
        const model = massiveAsymmetricFiveBar(mode, assembly);
        const pose = new FiveBarPose();
        const step = 1e-6;
        for (const { x, y } of sampleAssembledPoints(model, 10, 7 + mode.charCodeAt(1) + assembly)) {
          solvePose(model, pose, x, y);
          poseDynamics(model, pose);
          const { theta1, theta2 } = pose;
          const dU1 = (potentialEnergy(model, theta1 + step, theta2) - potentialEnergy(model, theta1 - step, theta2)) / (2 * step);
          const dU2 = (potentialEnergy(model, theta1, theta2 + step) - potentialEnergy(model, theta1, theta2 - step)) / (2 * step);
          const scale = Math.hypot(dU1, dU2);
          expect(Math.abs(pose.tauG1 - dU1)).toBeLessThan(1e-7 * scale);
          expect(Math.abs(pose.tauG2 - dU2)).toBeLessThan(1e-7 * scale);
        }
      }
    });

    it(`kinetic energy: ½ θ̇ᵀ D θ̇ equals Σ ½ m v² + ½ I ω² from finite-difference body velocities, mode "${mode}" (derived)`, () => {
      const random = seededRandom(311 + mode.charCodeAt(0));
      for (const assembly of ASSEMBLIES) {
        const model = massiveAsymmetricFiveBar(mode, assembly);
        const pose = new FiveBarPose();
        const step = 1e-6;
        for (const { x, y } of sampleAssembledPoints(model, 8, 13 + mode.charCodeAt(1) + assembly)) {
          solvePose(model, pose, x, y);
          poseDynamics(model, pose);
          // (1,0) and (0,1) fix D_11 and D_22, (1,1) then D_12; a random rate checks the whole form.
          const rates: [number, number][] = [[1, 0], [0, 1], [1, 1], [random() * 2 - 1, random() * 2 - 1]];
          for (const [rate1, rate2] of rates) {
            const ahead = linkageState(model, pose.theta1 + step * rate1, pose.theta2 + step * rate2)!;
            const behind = linkageState(model, pose.theta1 - step * rate1, pose.theta2 - step * rate2)!;
            const speed = (a: number, b: number): number => (a - b) / (2 * step);
            const rod1Rate = wrapAngle(ahead.rodAngle1 - behind.rodAngle1) / (2 * step);
            const rod2Rate = wrapAngle(ahead.rodAngle2 - behind.rodAngle2) / (2 * step);
            const kinetic =
              0.5 * (model.crankInertiaAboutPivot[0] + model.reflectedInertia[0]) * rate1 ** 2 +
              0.5 * (model.crankInertiaAboutPivot[1] + model.reflectedInertia[1]) * rate2 ** 2 +
              0.5 * model.rodMass[0] * (speed(ahead.rod1ComX, behind.rod1ComX) ** 2 + speed(ahead.rod1ComY, behind.rod1ComY) ** 2) +
              0.5 * model.rodInertiaAboutCom[0] * rod1Rate ** 2 +
              0.5 * model.rodMass[1] * (speed(ahead.rod2ComX, behind.rod2ComX) ** 2 + speed(ahead.rod2ComY, behind.rod2ComY) ** 2) +
              0.5 * model.rodInertiaAboutCom[1] * rod2Rate ** 2 +
              0.5 * model.endMass * (speed(ahead.px, behind.px) ** 2 + speed(ahead.py, behind.py) ** 2);
            const quadratic = 0.5 * (pose.d11 * rate1 ** 2 + 2 * pose.d12 * rate1 * rate2 + pose.d22 * rate2 ** 2);
            expect(Math.abs(quadratic - kinetic)).toBeLessThan(1e-7 * kinetic);
          }
          // Derived: M_x = J⁻ᵀ D J⁻¹, i.e. ½ Ṗᵀ M_x Ṗ is the same kinetic energy for Ṗ = J θ̇.
          const vx = pose.j11 * 0.3 + pose.j12 * -0.8;
          const vy = pose.j21 * 0.3 + pose.j22 * -0.8;
          const cartesian = pose.mx11 * vx * vx + 2 * pose.mx12 * vx * vy + pose.mx22 * vy * vy;
          const joint = pose.d11 * 0.09 + 2 * pose.d12 * 0.3 * -0.8 + pose.d22 * 0.64;
          expect(Math.abs(cartesian - joint)).toBeLessThan(1e-10 * joint);
        }
      }
    });
  }
});

/** Geometry of massiveAsymmetricFiveBar without its masses (for payload-only models). */
function massiveAsymmetricFiveBarGeometry(): { pivot1: [number, number]; pivot2: [number, number]; crank: [number, number]; rod: [number, number] } {
  const m = massiveAsymmetricFiveBar();
  return {
    pivot1: [m.pivotX[0], m.pivotY[0]],
    pivot2: [m.pivotX[1], m.pivotY[1]],
    crank: [m.crank[0], m.crank[1]],
    rod: [m.rod[0], m.rod[1]],
  };
}

// ---------------------------------------------------------------------------------------------
// Stiffness (leg compliance model of the README, "The five-bar model"), models built from studies so
// the section → compliance path runs
// ---------------------------------------------------------------------------------------------

describe('stiffness', () => {
  // The isotropic design of the first describe block: at P = (0, (p + d)/√2) both cranks are
  // perpendicular to their rods (s_1 = −1, s_2 = +1) and u_1 ⊥ u_2 (derived there).
  const crank = 0.2;
  const rod = 0.35;
  const span = SQRT2 * (rod - crank);
  const perpendicularY = (crank + rod) / SQRT2;
  const geometry = symmetricGeometry(crank, rod, span);
  const youngsModulus = 70e9; // Pa, an aluminium-like value (invented for the test)
  const secondMoment = 2e-9; // m⁴
  const rodArea = 5e-5; // m²
  const crankArea = 8e-5; // m²
  const jointStiffness = 3000; // N·m/rad
  const drive = (stiffness: number): string =>
    `{ gear_ratio: 1, rated_torque: 10, peak_torque: 30, max_speed: 100, joint_stiffness: ${stiffness} }`;

  it('crank bending with rigid actuator and rigid rod, force ⊥ crank: leg stiffness 3 E I / p³', () => {
    const study = studyFromParts({
      geometry,
      mass: `{ cranks: { mass_per_length: 0, youngs_modulus: ${youngsModulus}, second_moment: ${secondMoment} }, rods: { mass_per_length: 0 } }`,
    });
    const model = modelOfStudy(study);
    const pose = new FiveBarPose();
    expect(solvePose(model, pose, 0, perpendicularY)).toBe(PoseStatus.Assembled);
    poseDynamics(model, pose);
    // Roark's Formulas for Stress and Strain, 7th ed., Table 8.1 case 1a: cantilever tip load,
    // deflection F L³/(3 E I) (from memory).
    const cantilever = (3 * youngsModulus * secondMoment) / crank ** 3;
    expectRelative(1 / pose.compliance1, cantilever, 1e-12);
    expectRelative(1 / pose.compliance2, cantilever, 1e-12);
    // Derived: u_1 ⊥ u_2 and equal legs ⇒ K_x = k I, so its smallest eigenvalue is the leg stiffness.
    expectRelative(pose.kx11, cantilever, 1e-12);
    expectRelative(pose.kx22, cantilever, 1e-12);
    expect(Math.abs(pose.kx12)).toBeLessThan(1e-9 * cantilever);
    expectRelative(pose.minStiffness, cantilever, 1e-12);
    // Derived: a pure force F along u_1 deflects P by F/k along u_1 (K_x u_1 = k u_1).
    const forceX = 10 * pose.u1x;
    const forceY = 10 * pose.u1y;
    const det = pose.kx11 * pose.kx22 - pose.kx12 ** 2;
    const dx = (pose.kx22 * forceX - pose.kx12 * forceY) / det;
    const dy = (pose.kx11 * forceY - pose.kx12 * forceX) / det;
    expectRelative(dx * pose.u1x + dy * pose.u1y, 10 / cantilever, 1e-12);
  });

  it('at a general pose only the force component perpendicular to the crank bends it: c = s² p³/(3 E I) (derived)', () => {
    const study = studyFromParts({
      geometry,
      mass: `{ cranks: { mass_per_length: 0, youngs_modulus: ${youngsModulus}, second_moment: ${secondMoment} }, rods: { mass_per_length: 0 } }`,
    });
    const model = modelOfStudy(study);
    const pose = new FiveBarPose();
    // Derived: a force F u_i has the component F s_i across the crank; the tip moves by
    // s_i F p³/(3 E I) across it, of which s_i of that lies along u_i.
    for (const { x, y } of sampleAssembledPoints(model, 10, 71)) {
      solvePose(model, pose, x, y);
      poseDynamics(model, pose);
      expectRelative(pose.compliance1, (pose.s1 ** 2 * crank ** 3) / (3 * youngsModulus * secondMoment), 1e-12);
      expectRelative(pose.compliance2, (pose.s2 ** 2 * crank ** 3) / (3 * youngsModulus * secondMoment), 1e-12);
    }
  });

  it('axial members: a rod alone gives E A / d at every pose, a crank loaded along its axis E A / p', () => {
    // Hooke's law for a bar, δ = F L/(E A); e.g. Gere & Goodno, Mechanics of Materials (from memory).
    const rodOnly = modelOfStudy(
      studyFromParts({ geometry, mass: `{ cranks: { mass_per_length: 0 }, rods: { mass_per_length: 0, youngs_modulus: ${youngsModulus}, area: ${rodArea} } }` }),
    );
    const pose = new FiveBarPose();
    for (const { x, y } of [{ x: 0, y: perpendicularY }, ...sampleAssembledPoints(rodOnly, 5, 3)]) {
      solvePose(rodOnly, pose, x, y);
      poseDynamics(rodOnly, pose);
      expectRelative(1 / pose.compliance1, (youngsModulus * rodArea) / rod, 1e-12);
      expectRelative(1 / pose.compliance2, (youngsModulus * rodArea) / rod, 1e-12);
    }
    const crankOnly = modelOfStudy(
      studyFromParts({ geometry, mass: `{ cranks: { mass_per_length: 0, youngs_modulus: ${youngsModulus}, area: ${crankArea} }, rods: { mass_per_length: 0 } }` }),
    );
    // Leg 1 stretched (ρ_1 = p + d) and folded (ρ_1 = d − p): crank and rod aligned, s_1 = 0, so a
    // force along the rod loads the crank along its axis.
    for (const [radius, angle] of [[crank + rod, (70 * Math.PI) / 180], [rod - crank, Math.PI / 2]] as const) {
      solvePose(crankOnly, pose, -span / 2 + radius * Math.cos(angle), radius * Math.sin(angle));
      expect(Math.abs(pose.s1)).toBeLessThan(1e-7);
      poseDynamics(crankOnly, pose);
      expectRelative(1 / pose.compliance1, (youngsModulus * crankArea) / crank, 1e-12);
    }
  });

  it('rigid links, drive stiffness k: leg stiffness k/p² when the force is ⊥ the crank (derived: δ = p δθ, δθ = F p / k)', () => {
    const model = modelOfStudy(
      studyFromParts({ geometry, mass: '{ cranks: { mass_per_length: 0 }, rods: { mass_per_length: 0 } }', drives: `{ both: ${drive(jointStiffness)} }` }),
    );
    const pose = new FiveBarPose();
    solvePose(model, pose, 0, perpendicularY);
    poseDynamics(model, pose);
    expectRelative(1 / pose.compliance1, jointStiffness / crank ** 2, 1e-12);
    expectRelative(1 / pose.compliance2, jointStiffness / crank ** 2, 1e-12);
  });

  it('every source in series at the ⊥ pose: c = p²/k + p³/(3 E I) + d/(E A) (derived: springs in series add compliance)', () => {
    const model = modelOfStudy(
      studyFromParts({
        geometry,
        mass: `{ cranks: { mass_per_length: 0, youngs_modulus: ${youngsModulus}, second_moment: ${secondMoment}, area: ${crankArea} }, rods: { mass_per_length: 0, youngs_modulus: ${youngsModulus}, area: ${rodArea} } }`,
        drives: `{ both: ${drive(jointStiffness)} }`,
      }),
    );
    const pose = new FiveBarPose();
    solvePose(model, pose, 0, perpendicularY);
    poseDynamics(model, pose);
    const expected = crank ** 2 / jointStiffness + crank ** 3 / (3 * youngsModulus * secondMoment) + rod / (youngsModulus * rodArea);
    expectRelative(pose.compliance1, expected, 1e-12);
    expectRelative(pose.compliance2, expected, 1e-12);
  });

  it('unequal legs, every source compliant, random poses: c_i = s_i² (p_i²/k_i + p_i³/(3 E I_i)) + (1 − s_i²) p_i/(E A_i) + d_i/(E A_d,i)', () => {
    // Derived: springs in series add compliances; a unit force along u_i has s_i of it across the
    // crank (bending, drive) and √(1 − s_i²) along it (stretch), and each displacement projects back
    // on u_i with the same factor. Cantilever p³/(3 E I): Roark, 7th ed., Table 8.1 case 1a (from
    // memory); bars L/(E A): Gere & Goodno (from memory).
    const cranks = [0.2, 0.23] as const;
    const rods = [0.33, 0.29] as const;
    const moments = [2e-9, 3.5e-9] as const;
    const crankAreas = [8e-5, 6e-5] as const;
    const rodAreas = [5e-5, 4e-5] as const;
    const stiffnesses = [2100, 3900] as const;
    const link = (area: number, moment: number | null): string =>
      `{ mass_per_length: 0, youngs_modulus: ${youngsModulus}, area: ${area}${moment === null ? '' : `, second_moment: ${moment}`} }`;
    const model = modelOfStudy(
      studyFromParts({
        geometry: `{ base_span: 0.12, base_rise: 0.02, crank_1: ${cranks[0]}, rod_1: ${rods[0]}, crank_2: ${cranks[1]}, rod_2: ${rods[1]} }`,
        mass: `{ crank_1: ${link(crankAreas[0], moments[0])}, crank_2: ${link(crankAreas[1], moments[1])}, rod_1: ${link(rodAreas[0], null)}, rod_2: ${link(rodAreas[1], null)} }`,
        drives: `{ actuator_1: ${drive(stiffnesses[0])}, actuator_2: ${drive(stiffnesses[1])} }`,
      }),
    );
    const pose = new FiveBarPose();
    const points = sampleAssembledPoints(model, 20, 808, 0.05);
    expect(points.length).toBe(20);
    for (const { x, y } of points) {
      solvePose(model, pose, x, y);
      poseDynamics(model, pose);
      const sines = [pose.s1, pose.s2];
      const compliances = [pose.compliance1, pose.compliance2];
      for (const i of [0, 1] as const) {
        const s2 = sines[i]! ** 2;
        const expected =
          s2 * (cranks[i] ** 2 / stiffnesses[i] + cranks[i] ** 3 / (3 * youngsModulus * moments[i])) +
          (1 - s2) * (cranks[i] / (youngsModulus * crankAreas[i])) +
          rods[i] / (youngsModulus * rodAreas[i]);
        expectRelative(compliances[i]!, expected, 1e-12);
      }
      // Derived: K_x = Aᵀ diag(1/c_i) A (each leg a spring along its rod).
      const k1 = 1 / pose.compliance1;
      const k2 = 1 / pose.compliance2;
      const scale = k1 + k2;
      expect(Math.abs(pose.kx11 - (k1 * pose.u1x ** 2 + k2 * pose.u2x ** 2))).toBeLessThan(1e-12 * scale);
      expect(Math.abs(pose.kx12 - (k1 * pose.u1x * pose.u1y + k2 * pose.u2x * pose.u2y))).toBeLessThan(1e-12 * scale);
      expect(Math.abs(pose.kx22 - (k1 * pose.u1y ** 2 + k2 * pose.u2y ** 2))).toBeLessThan(1e-12 * scale);
    }
  });

  it('rigid links: K_x = J⁻ᵀ K_θ J⁻¹ with K_θ = diag(k_1, k_2) at random poses (derived: c_i = s_i² p_i²/k_i)', () => {
    const model = modelOfStudy(
      studyFromParts({
        geometry: '{ base_span: 0.12, base_rise: 0.02, crank_1: 0.2, rod_1: 0.33, crank_2: 0.23, rod_2: 0.29 }',
        mass: '{ cranks: { mass_per_length: 0 }, rods: { mass_per_length: 0 } }',
        drives: `{ actuator_1: ${drive(2100)}, actuator_2: ${drive(3900)} }`,
      }),
    );
    const pose = new FiveBarPose();
    for (const { x, y } of sampleAssembledPoints(model, 20, 123)) {
      solvePose(model, pose, x, y);
      poseDynamics(model, pose);
      const { g11, g12, g21, g22 } = pose;
      const k11 = 2100 * g11 * g11 + 3900 * g21 * g21;
      const k12 = 2100 * g11 * g12 + 3900 * g21 * g22;
      const k22 = 2100 * g12 * g12 + 3900 * g22 * g22;
      const scale = norm2x2(k11, k12, k12, k22);
      expect(Math.abs(pose.kx11 - k11)).toBeLessThan(1e-12 * scale);
      expect(Math.abs(pose.kx12 - k12)).toBeLessThan(1e-12 * scale);
      expect(Math.abs(pose.kx22 - k22)).toBeLessThan(1e-12 * scale);
    }
  });
});

// ---------------------------------------------------------------------------------------------
// Spring–inertia (natural frequencies)
// ---------------------------------------------------------------------------------------------

/** Generalized eigenvalues of K v = λ D v (2×2, D positive definite) by Cholesky with ml-matrix, ascending. */
function jointSpaceEigenvalues(k11: number, k12: number, k22: number, d11: number, d12: number, d22: number): number[] {
  const lower = new CholeskyDecomposition(new Matrix([[d11, d12], [d12, d22]])).lowerTriangularMatrix;
  const lowerInverse = lower.clone();
  // Inverse of a 2×2 lower-triangular matrix.
  const l11 = lower.get(0, 0);
  const l21 = lower.get(1, 0);
  const l22 = lower.get(1, 1);
  lowerInverse.set(0, 0, 1 / l11);
  lowerInverse.set(0, 1, 0);
  lowerInverse.set(1, 0, -l21 / (l11 * l22));
  lowerInverse.set(1, 1, 1 / l22);
  const reduced = lowerInverse.mmul(new Matrix([[k11, k12], [k12, k22]])).mmul(lowerInverse.transpose());
  return new EigenvalueDecomposition(reduced, { assumeSymmetric: true }).realEigenvalues.slice().sort((a, b) => a - b);
}

describe('spring–inertia', () => {
  it('one actuated link per leg (massless rods, no end mass): ω_n = √(k/I) for each crank, at every pose', () => {
    // Textbook single-degree-of-freedom vibration, ω_n = √(k/I) (from memory). Here D = diag(I_1, I_2)
    // and K_θ = diag(k_1, k_2) are constant, and (K_x, M_x) is congruent to (K_θ, D) by J (derived).
    const massPerLength = 2.3;
    const [crank1, crank2] = [0.2, 0.24];
    const [ratio1, ratio2] = [8, 5];
    const [rotor1, rotor2] = [2e-5, 3e-5];
    const [k1, k2] = [1500, 2600];
    const drive = (ratio: number, rotor: number, stiffness: number): string =>
      `{ gear_ratio: ${ratio}, rotor_inertia: ${rotor}, rated_torque: 1, peak_torque: 3, max_speed: 300, joint_stiffness: ${stiffness} }`;
    const model = modelOfStudy(
      studyFromParts({
        geometry: `{ base_span: 0.1, crank_1: ${crank1}, rod_1: 0.3, crank_2: ${crank2}, rod_2: 0.3 }`,
        mass: `{ cranks: { mass_per_length: ${massPerLength} }, rods: { mass_per_length: 0 } }`,
        drives: `{ actuator_1: ${drive(ratio1, rotor1, k1)}, actuator_2: ${drive(ratio2, rotor2, k2)} }`,
      }),
    );
    // Uniform bar about its end m L²/3 (Meriam & Kraige, from memory) plus reflected rotor N² J (README, "The five-bar model").
    const inertia1 = (massPerLength * crank1 ** 3) / 3 + ratio1 ** 2 * rotor1;
    const inertia2 = (massPerLength * crank2 ** 3) / 3 + ratio2 ** 2 * rotor2;
    const hz = [Math.sqrt(k1 / inertia1), Math.sqrt(k2 / inertia2)].map((w) => w / (2 * Math.PI)).sort((a, b) => a - b);
    const pose = new FiveBarPose();
    const points = sampleAssembledPoints(model, 10, 77);
    expect(points.length).toBe(10);
    for (const { x, y } of points) {
      solvePose(model, pose, x, y);
      poseDynamics(model, pose);
      expectRelative(pose.d11, inertia1, 1e-13);
      expect(pose.d12).toBe(0);
      expectRelative(pose.frequencyLow, hz[0]!, 1e-10);
      expectRelative(pose.frequencyHigh, hz[1]!, 1e-10);
    }
  });

  for (const mode of WORKING_MODES) {
    it(`full masses, compliant drives, rigid links: eigenvalues of (K_x, M_x) equal those of (K_θ, D), mode "${mode}" (derived: congruence by J)`, () => {
      const [k1, k2] = [1800, 4200];
      const base = massiveAsymmetricFiveBar(mode, 1);
      const model: FiveBarModel = { ...base, complianceBending: [base.crank[0] ** 2 / k1, base.crank[1] ** 2 / k2] };
      const pose = new FiveBarPose();
      for (const { x, y } of sampleAssembledPoints(model, 12, 55 + mode.charCodeAt(1))) {
        solvePose(model, pose, x, y);
        poseDynamics(model, pose);
        const [low, high] = jointSpaceEigenvalues(k1, 0, k2, pose.d11, pose.d12, pose.d22);
        expectRelative((2 * Math.PI * pose.frequencyLow) ** 2, low!, 1e-9);
        expectRelative((2 * Math.PI * pose.frequencyHigh) ** 2, high!, 1e-9);
      }
    });
  }
});
