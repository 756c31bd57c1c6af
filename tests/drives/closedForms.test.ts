/**
 * Drive-train checks against closed forms (docs/drives.md). Each check names its source: "derived
 * here" with the one-line derivation, or "common practice, no source" for trade formulas.
 *
 * The joint motion comes from the project's own cycle sampler (CycleSamples over a straight move
 * along x, with x read as the joint angle q in rad): q̇ = ẋ, q̈ = ẍ, same nodes and trapezoid weights
 * as every duty cycle. The link is a single uniform bar of mass m and length L turning about one end
 * in a horizontal plane (no gravity), J_L = m L²/3 (uniform bar about its end: derived here,
 * ∫₀ᴸ (m/L) s² ds = m L²/3).
 */
import { describe, expect, it } from 'vitest';
import { CycleSamples, CycleTrajectory } from '../../src/mechanics/dutyCycle.js';
import { DriveCheckResult, checkAxis, checkCycle, envelopeMinCycleTime, type JointCycle } from '../../src/mechanics/driveChecks.js';
import { cornerEnvelopes, curveTorque, jointPeakEffortAtSpeed, motorTorque } from '../../src/drives/envelope.js';
import { DIRECT_DRIVE, type DriveTrain, type GearboxSpec, type MotorSpec } from '../../src/drives/types.js';
import { composeDrive } from '../../src/study/driveTrains.js';
import { driveAtJoint } from '../../src/study/drives.js';
import type { MotionLaw } from '../../src/core/cycle.js';

const RPM = (2 * Math.PI) / 60;
const m = 2; // kg
const L = 0.5; // m
const J_LINK = (m * L * L) / 3;

function motor(overrides: Partial<MotorSpec> = {}): MotorSpec {
  const { continuous, peak } = cornerEnvelopes({ ratedTorque: 1.27, peakTorque: 3.8, maxSpeed: 6000 * RPM });
  return { name: 'M', continuous, peak, maxSpeed: 6000 * RPM, rotorInertia: 3.4e-5, encoderCounts: 0, mass: 0, cost: Number.NaN, ...overrides };
}

function gearbox(ratio: number, efficiency: number, inertia = 0): GearboxSpec {
  return { ...DIRECT_DRIVE, name: `G${ratio}`, ratio, efficiency, inertia };
}

/**
 * The single link through one move of amplitude h (rad) in time T with `law`, then a dwell of
 * `dwell` s (none when 0), as a JointCycle: effort τ_j = (J_L + J_drive) q̈ (the joint-space inertia
 * holds the drive's own inertia, as every architecture's D does).
 */
function linkCycle(law: MotionLaw, h: number, T: number, dwell: number, jDrive: number, perMove = 400): JointCycle {
  const steps = [
    { kind: 'move' as const, to: [h, 0] as [number, number], law, time: T },
    ...(dwell > 0 ? [{ kind: 'dwell' as const, time: dwell }] : []),
    { kind: 'move' as const, to: [0, 0] as [number, number], law, time: T },
  ];
  // Budget so that each move gets exactly `perMove` intervals (a multiple of 4 puts a node on τ = 1/4, the cycloid's peak).
  const s = new CycleSamples(new CycleTrajectory({ start: [0, 0], steps }), 2 * perMove + 2 + (dwell > 0 ? 1 : 0));
  const J = J_LINK + jDrive;
  const inertial = Float64Array.from(s.ax, (a) => J * a);
  return {
    dof: 1,
    samples: s,
    qd: [Float64Array.from(s.vx)],
    qdd: [Float64Array.from(s.ax)],
    effortConstant: [new Float64Array(s.count)],
    effortViscous: [new Float64Array(s.count)],
    effortInertial: [inertial],
    inertiaDiagonal: [new Float64Array(s.count).fill(J)],
  };
}

describe('single uniform link through a cycloidal move, direct drive', () => {
  const train: DriveTrain = { motor: motor(), gearbox: DIRECT_DRIVE, ratio: 1, stage: null };
  const jDrive = train.motor.rotorInertia;
  const h = 1.2; // rad
  const T = 0.4; // s

  it('peak and RMS motor torque: derived from the cycloidal law, with and without a dwell', () => {
    // Derived here: cycloidal q = h(τ − sin 2πτ/(2π)) ⇒ q̈ = (2π h/T²) sin(2π t/T); τ = J q̈, peak J·2πh/T²;
    // mean of sin² over a move is 1/2 ⇒ RMS over moves = peak/√2; a dwell of T_d at zero torque
    // scales the mean square by 2T/(2T + T_d).
    const peak = (J_LINK + jDrive) * (2 * Math.PI * h) / (T * T);
    for (const dwell of [0, 0.3]) {
      const cycle = linkCycle('cycloidal', h, T, dwell, jDrive);
      const out = new DriveCheckResult();
      checkAxis(cycle, 0, train, 1, out);
      expect(out.peakMotorTorque[0]).toBeCloseTo(peak, 6);
      const rms = (peak / Math.SQRT2) * Math.sqrt((2 * T) / (2 * T + dwell));
      expect(out.rmsMotorTorque[0]! / rms).toBeCloseTo(1, 6);
    }
  });

  it('poly5 move: peak (10/√3) J h/T² and RMS √(120/7) J h/T² over the moves', () => {
    // Derived here: s″ = 60τ − 180τ² + 120τ³, largest at τ = (3 ± √3)/6 with |s″| = 10/√3;
    // ∫₀¹ s″² dτ = 120/7 (expand and integrate the polynomial).
    const cycle = linkCycle('poly5', h, T, 0, jDrive, 2000);
    const out = new DriveCheckResult();
    checkAxis(cycle, 0, train, 1, out);
    const J = J_LINK + jDrive;
    expect(out.peakMotorTorque[0]! / ((10 / Math.sqrt(3)) * J * h / (T * T))).toBeCloseTo(1, 5);
    expect(out.rmsMotorTorque[0]! / (Math.sqrt(120 / 7) * J * h / (T * T))).toBeCloseTo(1, 5);
  });

  it('time scaling: s times slower divides peak torque by s² (derived here: q̈ ∝ 1/T²)', () => {
    const cycle = linkCycle('cycloidal', h, T, 0, jDrive);
    const a = new DriveCheckResult();
    const b = new DriveCheckResult();
    checkAxis(cycle, 0, train, 1, a);
    checkAxis(cycle, 0, train, 0.5, b);
    expect(b.peakMotorTorque[0]! / a.peakMotorTorque[0]!).toBeCloseTo(0.25, 10);
  });
});

describe('single uniform link through a cycloidal move, geared', () => {
  const N = 10;
  const eta = 0.9;
  const train: DriveTrain = { motor: motor(), gearbox: gearbox(N, eta, 1.2e-5), ratio: N, stage: null };
  const jDrive = N * N * (train.motor.rotorInertia + train.gearbox.inertia);
  const h = 1.2;
  const T = 0.4;

  it('peak and RMS motor torque with the efficiency on the load side only', () => {
    // Derived here: r = 1/N; accelerating half (load driven): τ_m = (J_drive + J_L/η) r q̈; decelerating
    // half (load drives back): τ_m = (J_drive + J_L η) r q̈. Each half has mean sin² = 1/2.
    const a = (2 * Math.PI * h) / (T * T);
    const driving = (jDrive + J_LINK / eta) * a / N;
    const driven = (jDrive + J_LINK * eta) * a / N;
    const cycle = linkCycle('cycloidal', h, T, 0, jDrive);
    const out = new DriveCheckResult();
    checkAxis(cycle, 0, train, 1, out);
    expect(out.peakMotorTorque[0]! / driving).toBeCloseTo(1, 6);
    const rms = Math.sqrt(0.5 * (driving * driving + driven * driven) / 2);
    expect(out.rmsMotorTorque[0]! / rms).toBeCloseTo(1, 5);
  });
});

describe('inertia ratio, by hand', () => {
  it('direct drive: J_L / J_rotor', () => {
    // Derived here: D = J_L + J_r, r = 1 ⇒ (D r² − J_r)/J_r = J_L/J_r = 0.1667/3.4e-5 = 4901.96.
    const train: DriveTrain = { motor: motor(), gearbox: DIRECT_DRIVE, ratio: 1, stage: null };
    const out = new DriveCheckResult();
    checkAxis(linkCycle('cycloidal', 1, 0.5, 0, 3.4e-5), 0, train, 1, out);
    expect(out.inertiaRatio[0]).toBeCloseTo(J_LINK / 3.4e-5, 6);
    expect(out.inertiaRatio[0]).toBeCloseTo(4901.96, 1);
  });

  it('geared: J_L/(N² J_r) + J_gear/J_r', () => {
    // Derived here: D = J_L + N²(J_r + J_g), r = 1/N ⇒ D/N² − J_r = J_L/N² + J_g;
    // by hand 0.16667/(100 · 3.4e-5) + 1.2e-5/3.4e-5 = 49.020 + 0.353 = 49.373.
    const N = 10;
    const train: DriveTrain = { motor: motor(), gearbox: gearbox(N, 0.9, 1.2e-5), ratio: N, stage: null };
    const out = new DriveCheckResult();
    checkAxis(linkCycle('cycloidal', 1, 0.5, 0, N * N * (3.4e-5 + 1.2e-5)), 0, train, 1, out);
    expect(out.inertiaRatio[0]).toBeCloseTo(49.373, 2);
  });
});

describe('envelope checks on constructed points, both sides of the curve', () => {
  // Peak 3.8 N·m flat to 3200 rpm, then linear to 1.9 N·m at 6000 rpm: at 4600 rpm (halfway) 2.85 N·m.
  const { peak, continuous } = cornerEnvelopes({ ratedTorque: 1.27, peakTorque: 3.8, maxSpeed: 6000 * RPM, cornerSpeed: 3200 * RPM, peakAtMax: 1.9, continuousAtMax: 1.1 });
  const train: DriveTrain = { motor: motor({ peak, continuous }), gearbox: DIRECT_DRIVE, ratio: 1, stage: null };

  it('curve values (derived here: linear interpolation between the corner points)', () => {
    expect(curveTorque(peak, 1000 * RPM)).toBeCloseTo(3.8, 12);
    expect(curveTorque(peak, 4600 * RPM)).toBeCloseTo(2.85, 12);
    expect(curveTorque(peak, 6000 * RPM)).toBeCloseTo(1.9, 12);
    expect(curveTorque(peak, 6001 * RPM)).toBe(0);
    expect(curveTorque(continuous, 3000 * RPM)).toBeCloseTo(1.27 - 0.17 * 0.5, 12);
  });

  /** One-node "cycle" at constant joint speed ω (rad/s) and effort τ (N·m): a dwell-like node moving. */
  function point(speed: number, torque: number, rmsTorque = torque): JointCycle {
    const samples = { count: 2, weight: Float64Array.of(0.5, 0.5), moving: Uint8Array.of(1, 1), moveTime: 1, dwellTime: 0 };
    return {
      dof: 1, samples,
      qd: [Float64Array.of(speed, speed)], qdd: [new Float64Array(2)],
      effortConstant: [Float64Array.of(torque, rmsTorque)], effortViscous: [new Float64Array(2)], effortInertial: [new Float64Array(2)],
      inertiaDiagonal: [Float64Array.of(1e-3, 1e-3)],
    };
  }

  it.each([
    [1000, 3.7, true], [1000, 3.9, false],
    [4600, 2.80, true], [4600, 2.90, false],
    [5900, 1.9, true], [5900, 2.05, false],
    [6100, 0.1, false],
  ])('peak envelope at %d rpm, %f N·m: inside = %s', (rpm, torque, inside) => {
    const out = new DriveCheckResult();
    checkAxis(point(rpm * RPM, torque), 0, train, 1, out);
    expect(out.peakUse[0]! <= 1).toBe(inside);
  });

  it.each([
    [3000, 1.15, true], [3000, 1.20, false],
  ])('RMS against the continuous curve at the mean speed %d rpm, %f N·m: inside = %s', (rpm, torque, inside) => {
    // Continuous 1.27 → 1.1 N·m over 0 … 6000 rpm: 1.185 N·m at 3000 rpm.
    const out = new DriveCheckResult();
    checkAxis(point(rpm * RPM, torque), 0, train, 1, out);
    expect(out.rmsUse[0]! <= 1).toBe(inside);
  });

  it('acceleration capability at speed falls with the envelope above the corner speed', () => {
    expect(jointPeakEffortAtSpeed(train, 0)).toBeCloseTo(3.8, 12);
    expect(jointPeakEffortAtSpeed(train, 4600 * RPM)).toBeCloseTo(2.85, 12);
    expect(jointPeakEffortAtSpeed(train, 6500 * RPM)).toBe(0);
  });

  it('min cycle time respects the envelope: every check holds there and fails just faster', () => {
    const cyc = linkCycle('cycloidal', 20, 0.4, 0.1, train.motor.rotorInertia);
    const scratch = new DriveCheckResult();
    const tMin = envelopeMinCycleTime(cyc, [train], scratch);
    expect(Number.isFinite(tMin)).toBe(true);
    const u = cyc.samples.moveTime / (tMin - cyc.samples.dwellTime);
    expect(checkCycle(cyc, [train], u, scratch)).toBeLessThanOrEqual(1);
    expect(checkCycle(cyc, [train], u * 1.001, scratch)).toBeGreaterThan(1);
    // A flat envelope (no corner) allows a shorter cycle (negative control: the corner matters here).
    const flat: DriveTrain = { ...train, motor: motor() };
    expect(envelopeMinCycleTime(cyc, [flat], scratch)).toBeLessThan(tMin);
  });
});

describe('screw drive: thrust and speed from lead and efficiency (common practice, no source)', () => {
  // F = 2π η T / ℓ, v = ℓ ω / (2π): ℓ = 10 mm, η = 0.9, T = 1 N·m ⇒ 565.49 N; 3000 rpm ⇒ 0.5 m/s.
  const stage = { kind: 'screw' as const, lead: 0.01, efficiency: 0.9, maxThrust: 2000, maxSpeed: Infinity, inertia: 0, stiffness: Infinity };
  const { continuous, peak } = cornerEnvelopes({ ratedTorque: 1, peakTorque: 1, maxSpeed: 3000 * RPM });
  const train: DriveTrain = { motor: motor({ continuous, peak, maxSpeed: 3000 * RPM }), gearbox: DIRECT_DRIVE, ratio: 1, stage };

  it('at the slider: peak force and speed', () => {
    const atJoint = driveAtJoint(composeDrive(train, 'prismatic'), 'prismatic');
    expect(atJoint.peakEffort).toBeCloseTo(565.49, 2);
    expect(atJoint.maxSpeed).toBeCloseTo(0.5, 12);
    expect(jointPeakEffortAtSpeed(train, 0.25)).toBeCloseTo(565.49, 2);
  });

  it('motor torque for a thrust, driving and driven (F ℓ/(2π η) and F ℓ η/(2π))', () => {
    expect(motorTorque(565.4867, 0.1, 0, 0.01 / (2 * Math.PI), 0.9, 0)).toBeCloseTo(1, 5);
    expect(motorTorque(-100, 0.1, 0, 0.01 / (2 * Math.PI), 0.9, 0)).toBeCloseTo((-100 * 0.01 * 0.9) / (2 * Math.PI), 10);
  });
});

describe('slider stiffness: stage in series with the gearbox (derived here: springs in series, k_g seen at the slider as k_g (2π/ℓ)²)', () => {
  it('1/k = 1/k_stage + (ℓ/2π)²/k_gear', () => {
    const stage = { kind: 'screw' as const, lead: 0.01, efficiency: 0.9, maxThrust: 2000, maxSpeed: Infinity, inertia: 0, stiffness: 2e7 };
    const gear = { ...gearbox(5, 0.95), stiffness: 1e4 };
    const drive = composeDrive({ motor: motor(), gearbox: gear, ratio: 5, stage }, 'prismatic');
    const rs = 0.01 / (2 * Math.PI);
    expect(drive.jointStiffness).toBeCloseTo(1 / (1 / 2e7 + (rs * rs) / 1e4), 3);
    // by hand: (ℓ/2π)²/k_g = 2.533e-10 m/N, 1/k_stage = 5e-8 m/N ⇒ k = 1.990e7 N/m
    expect(drive.jointStiffness / 1.990e7).toBeCloseTo(1, 3);
  });
});
