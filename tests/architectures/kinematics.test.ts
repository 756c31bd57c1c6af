/**
 * Kinematics of the 2-PRR, 3-RRR and 3-PRR models (src/architectures): FK∘IK in every working mode,
 * finite-difference Jacobians, and the five-bar adapter against the engine it wraps.
 */
import { describe, expect, it } from 'vitest';
import { fiveBar } from '../../src/architectures/fivebar.js';
import { PoseStatus, type ModelInput } from '../../src/architectures/types.js';
import { FiveBarPose, poseDynamics as formerPoseDynamics, solvePose as formerSolvePose, type FiveBarModel } from '../helpers/fiveBarClosedForm.js';
import { CASES, findPoses, TUBE, LIGHT_TUBE, withMode } from './models.js';

function relativeError(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let diff = 0;
  let norm = 0;
  for (let k = 0; k < a.length; k++) {
    diff += (a[k]! - b[k]!) ** 2;
    norm += b[k]! ** 2;
  }
  return Math.sqrt(diff / norm);
}

const measured: string[] = [];

describe.each(CASES)('$label kinematics', (c) => {
  const n = c.architecture.dof;

  it.each(c.architecture.workingModes)('FK∘IK in working mode %s (both assembly signs found where the mode has them)', (mode) => {
    const base = c.architecture.buildModel(withMode(c.input, mode));
    const poses = findPoses(c, base, 8, 17);
    expect(poses.length).toBeGreaterThanOrEqual(4);
    let worst = 0;
    let worstJoint = 0;
    for (const found of poses) {
      const model = c.architecture.buildModel(withMode(c.input, mode, found.assembly));
      const pose = c.architecture.createPose();
      expect(c.architecture.solvePose(model, pose, found.x, found.y, found.phi)).toBe(PoseStatus.Assembled);
      const q = Float64Array.from(pose.q);
      // Start Newton (3-DOF) from a pose 5 mm and 0.03 rad away; the 2-PRR's FK is closed form.
      const guess = Float64Array.from(n === 3 ? [found.x + 0.005, found.y - 0.004, found.phi + 0.03] : [0, 0]);
      expect(c.architecture.forwardKinematics(model, q, guess)).toBe(true);
      const target = n === 3 ? [found.x, found.y, found.phi] : [found.x, found.y];
      for (let k = 0; k < n; k++) worst = Math.max(worst, Math.abs(guess[k]! - target[k]!));
      // IK of the FK result gives the joint positions back.
      c.architecture.solvePose(model, pose, guess[0]!, guess[1]!, n === 3 ? guess[2]! : 0);
      for (let k = 0; k < n; k++) worstJoint = Math.max(worstJoint, Math.abs(pose.q[k]! - q[k]!));
    }
    measured.push(`${c.label} ${mode}: FK∘IK max error ${worst.toExponential(2)}, IK∘FK ${worstJoint.toExponential(2)} (${poses.length} poses)`);
    // derived: FK inverts IK on the same branch; tolerance = Newton stop 1e-13 of the largest link plus rounding.
    expect(worst).toBeLessThan(1e-11);
    expect(worstJoint).toBeLessThan(1e-11);
  });

  it('finite-difference Jacobians J (through FK) and J⁻¹ (through IK), rod rates, in every working mode', () => {
    let worstJ = 0;
    let worstG = 0;
    let worstRod = 0;
    for (const mode of c.architecture.workingModes) {
      const base = c.architecture.buildModel(withMode(c.input, mode));
      const poses = findPoses(c, base, 2, 101);
      expect(poses.length).toBeGreaterThanOrEqual(1);
      for (const found of poses) {
        const model = c.architecture.buildModel(withMode(c.input, mode, found.assembly));
        const pose = c.architecture.createPose();
        const probe = c.architecture.createPose();
        c.architecture.solvePose(model, pose, found.x, found.y, found.phi);
        c.architecture.poseDynamics(model, pose);
        const q0 = Float64Array.from(pose.q);
        const task0 = n === 3 ? [found.x, found.y, found.phi] : [found.x, found.y];
        const fdJ = new Float64Array(n * n);
        const fdRod = new Float64Array(n * n);
        const h = 1e-6;
        for (let k = 0; k < n; k++) {
          const plus = new Float64Array(n);
          const minus = new Float64Array(n);
          const qp = Float64Array.from(q0);
          const qm = Float64Array.from(q0);
          qp[k] = qp[k]! + h;
          qm[k] = qm[k]! - h;
          const gp = Float64Array.from(task0);
          const gm = Float64Array.from(task0);
          expect(c.architecture.forwardKinematics(model, qp, gp)).toBe(true);
          expect(c.architecture.forwardKinematics(model, qm, gm)).toBe(true);
          plus.set(gp.subarray(0, n));
          minus.set(gm.subarray(0, n));
          for (let r = 0; r < n; r++) fdJ[r * n + k] = (plus[r]! - minus[r]!) / (2 * h);
          // Rod angles at the displaced poses.
          c.architecture.solvePose(model, probe, gp[0]!, gp[1]!, n === 3 ? gp[2]! : 0);
          const anglesPlus = Array.from({ length: n }, (_, i) => Math.atan2(probe.rodDirection[2 * i + 1]!, probe.rodDirection[2 * i]!));
          c.architecture.solvePose(model, probe, gm[0]!, gm[1]!, n === 3 ? gm[2]! : 0);
          for (let i = 0; i < n; i++) {
            const am = Math.atan2(probe.rodDirection[2 * i + 1]!, probe.rodDirection[2 * i]!);
            let diff = anglesPlus[i]! - am;
            diff -= 2 * Math.PI * Math.round(diff / (2 * Math.PI));
            fdRod[i * n + k] = diff / (2 * h);
          }
        }
        // J⁻¹ column by column: displace the task pose, IK.
        const fdG = new Float64Array(n * n);
        for (let k = 0; k < n; k++) {
          const tp = Float64Array.from(task0);
          const tm = Float64Array.from(task0);
          tp[k] = tp[k]! + h;
          tm[k] = tm[k]! - h;
          c.architecture.solvePose(model, probe, tp[0]!, tp[1]!, n === 3 ? tp[2]! : 0);
          const qp = Float64Array.from(probe.q);
          c.architecture.solvePose(model, probe, tm[0]!, tm[1]!, n === 3 ? tm[2]! : 0);
          for (let r = 0; r < n; r++) fdG[r * n + k] = (qp[r]! - probe.q[r]!) / (2 * h);
        }
        worstJ = Math.max(worstJ, relativeError(fdJ, pose.J));
        worstG = Math.max(worstG, relativeError(fdG, pose.Jinv));
        worstRod = Math.max(worstRod, relativeError(fdRod, pose.rodRate));
      }
    }
    measured.push(`${c.label}: finite-difference J ${worstJ.toExponential(2)}, J⁻¹ ${worstG.toExponential(2)}, rod rates ${worstRod.toExponential(2)} (relative)`);
    // derived: central differences with h = 1e-6 have truncation error ~h² ≈ 1e-12 and rounding ~1e-10.
    expect(worstJ).toBeLessThan(1e-7);
    expect(worstG).toBeLessThan(1e-7);
    expect(worstRod).toBeLessThan(1e-7);
  });

  it('J_h = diag(1, 1, L) J and 1/κ from the J⁻¹ route equals σ_min/σ_max of J_h computed independently (ml-matrix SVD)', async () => {
    const { Matrix, SingularValueDecomposition } = await import('ml-matrix');
    const model = c.architecture.buildModel(c.input);
    const poses = findPoses(c, model, 5, 5);
    expect(poses.length).toBeGreaterThanOrEqual(3);
    const pose = c.architecture.createPose();
    for (const found of poses) {
      c.architecture.solvePose(model, pose, found.x, found.y, found.phi);
      const rows = Array.from({ length: n }, (_, r) => Array.from({ length: n }, (_, k) => pose.J[r * n + k]! * (r === 2 ? model.characteristicLength : 1)));
      const sv = new SingularValueDecomposition(new Matrix(rows)).diagonal;
      const expected = Math.min(...sv) / Math.max(...sv);
      // derived: κ(J_h) = κ(J_h⁻¹) and row scaling of J_h⁻¹ by Π_{j≠i} B_jj = det B · B⁻¹ leaves J_h⁻¹ = B⁻¹A_h up to a scalar.
      expect(Math.abs(pose.inverseCondition - expected)).toBeLessThan(1e-12);
    }
  });
});

describe('five-bar behind the interface', () => {
  const input: ModelInput = {
    parameters: { base_span: 0.22, base_rise: 0.05, crank_1: 0.2, rod_1: 0.28, crank_2: 0.16, rod_2: 0.32 },
    workingMode: '+-',
    assembly: 1,
    cranks: [TUBE, LIGHT_TUBE],
    rods: [LIGHT_TUBE, TUBE],
    elbowHubMass: 0.12,
    endHubMass: 0.05,
    payloadMass: 0.6,
    gravity: [0, -9.81],
    drives: [0, 1].map(() => ({ reflectedInertia: 0.004, jointStiffness: 3e4, peakEffort: 20, ratedEffort: 8, maxSpeed: 6, encoderStep: 1e-4 })),
  };

  /** The five-bar's former engine model of the same input (the lumping of buildFiveBarModel in tests/helpers/fiveBarClosedForm.ts). */
  function formerEngineModel(mode: string, assembly: 1 | -1): FiveBarModel {
    const crank = [0.2, 0.16] as const;
    const rod = [0.28, 0.32] as const;
    const cranks = [TUBE, LIGHT_TUBE] as const;
    const rods = [LIGHT_TUBE, TUBE] as const;
    const hub = 0.12;
    const crankMass = [cranks[0].massPerLength * crank[0], cranks[1].massPerLength * crank[1]] as const;
    const rodMass = [rods[0].massPerLength * rod[0], rods[1].massPerLength * rod[1]] as const;
    const bending = (i: 0 | 1): number => crank[i] ** 2 / 3e4 + crank[i] ** 3 / (3 * cranks[i].youngsModulus * cranks[i].secondMoment);
    return {
      pivotX: [-0.11, 0.11], pivotY: [0, 0.05], crank, rod,
      sigma: [mode[0] === '+' ? 1 : -1, mode[1] === '+' ? 1 : -1], assembly, jointLimits: [null, null],
      crankInertiaAboutPivot: [(crankMass[0] * crank[0] ** 2) / 3 + hub * crank[0] ** 2, (crankMass[1] * crank[1] ** 2) / 3 + hub * crank[1] ** 2],
      crankFirstMoment: [(crankMass[0] * crank[0]) / 2 + hub * crank[0], (crankMass[1] * crank[1]) / 2 + hub * crank[1]],
      rodMass, rodComDistance: [rod[0] / 2, rod[1] / 2], rodInertiaAboutCom: [(rodMass[0] * rod[0] ** 2) / 12, (rodMass[1] * rod[1] ** 2) / 12],
      endMass: 0.05 + 0.6, reflectedInertia: [0.004, 0.004], gravity: [0, -9.81],
      complianceBending: [bending(0), bending(1)],
      complianceCrankAxial: [crank[0] / (cranks[0].youngsModulus * cranks[0].area), crank[1] / (cranks[1].youngsModulus * cranks[1].area)],
      complianceRodAxial: [rod[0] / (rods[0].youngsModulus * rods[0].area), rod[1] / (rods[1].youngsModulus * rods[1].area)],
    };
  }

  it('the five-bar on the leg layer gives the former five-bar engine\'s J, D, τ_g, K_x, M_x, 1/κ and frequencies', () => {
    let worst = 0;
    let checked = 0;
    for (const mode of fiveBar.workingModes) {
      for (const assembly of [1, -1] as const) {
        const model = fiveBar.buildModel({ ...input, workingMode: mode, assembly });
        const former = formerEngineModel(mode, assembly);
        const pose = fiveBar.createPose();
        const engine = new FiveBarPose();
        for (let x = -0.3; x <= 0.3; x += 0.05) {
          for (let y = -0.4; y <= 0.45; y += 0.05) {
            const status = fiveBar.solvePose(model, pose, x, y);
            expect(formerSolvePose(former, engine, x, y)).toBe(status);
            if (status !== PoseStatus.Assembled || pose.inverseCondition < 0.05) continue;
            fiveBar.poseDynamics(model, pose);
            formerPoseDynamics(former, engine);
            const e = engine;
            const pairs: [ArrayLike<number>, number[]][] = [
              [pose.J, [e.j11, e.j12, e.j21, e.j22]],
              [pose.D, [e.d11, e.d12, e.d12, e.d22]],
              [pose.tauG, [e.tauG1, e.tauG2]],
              [pose.Kx, [e.kx11, e.kx12, e.kx12, e.kx22]],
              [pose.Mx, [e.mx11, e.mx12, e.mx12, e.mx22]],
            ];
            for (const [a, b] of pairs) worst = Math.max(worst, relativeError(a, Float64Array.from(b)));
            expect(pose.inverseCondition).toBe(e.inverseCondition);
            expect(pose.detA).toBe(e.detA);
            worst = Math.max(worst, Math.abs(e.frequencyLow - pose.frequencies[0]!) / e.frequencyLow);
            checked++;
          }
        }
      }
    }
    measured.push(`five-bar: leg layer vs the former engine (tests/helpers/fiveBarClosedForm.ts), worst relative difference ${worst.toExponential(2)} over ${checked} poses`);
    expect(checked).toBeGreaterThan(100);
    // Two codings of the same formulas (README "The five-bar model"): rounding only.
    expect(worst).toBeLessThan(1e-12);
  });
});

describe('report', () => {
  it('prints the measured errors', () => {
    for (const line of measured) console.info(line);
    expect(measured.length).toBeGreaterThan(0);
  });
});
