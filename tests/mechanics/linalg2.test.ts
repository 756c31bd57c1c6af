/**
 * Closed-form 2×2 helpers (src/architectures/linalg2.ts) against ml-matrix's general SVD and eigenvalue
 * decompositions on random matrices, including badly conditioned and singular ones.
 */
import { describe, expect, it } from 'vitest';
import { CholeskyDecomposition, EigenvalueDecomposition, Matrix, SingularValueDecomposition, inverse } from 'ml-matrix';
import {
  generalizedEigen2,
  inverseCondition2,
  maxEigenSymmetric2,
  maxSingularValue2,
  minEigenSymmetric2,
} from '../../src/architectures/linalg2.js';
import { seededRandom } from '../helpers/fivebarModels.js';

type Entries = readonly [number, number, number, number];

/** Singular values (descending) of [a b; c d] by ml-matrix. */
function referenceSingularValues([a, b, c, d]: Entries): [number, number] {
  const values = new SingularValueDecomposition(new Matrix([[a, b], [c, d]])).diagonal;
  const sorted = values.slice().sort((x, y) => y - x);
  return [sorted[0]!, sorted[1]!];
}

/** Rotation matrix entries for angle φ. */
function rotation(phi: number): Entries {
  return [Math.cos(phi), -Math.sin(phi), Math.sin(phi), Math.cos(phi)];
}

/** U diag(σ1, σ2) Vᵀ with U, V rotations (optionally a reflection), entries row-major. */
function withSingularValues(random: () => number, sigma1: number, sigma2: number): Entries {
  const [u11, u12, u21, u22] = rotation(random() * 2 * Math.PI);
  const [v11, v12, v21, v22] = rotation(random() * 2 * Math.PI);
  const flip = random() < 0.5 ? -1 : 1;
  // (U Σ) Vᵀ
  const a11 = u11 * sigma1;
  const a12 = u12 * sigma2 * flip;
  const a21 = u21 * sigma1;
  const a22 = u22 * sigma2 * flip;
  return [a11 * v11 + a12 * v12, a11 * v21 + a12 * v22, a21 * v11 + a22 * v12, a21 * v21 + a22 * v22];
}

/** Random entries in [−scale, scale]. */
function randomEntries(random: () => number, scale: number): Entries {
  return [(random() * 2 - 1) * scale, (random() * 2 - 1) * scale, (random() * 2 - 1) * scale, (random() * 2 - 1) * scale];
}

describe('inverseCondition2 and maxSingularValue2 against ml-matrix SVD', () => {
  it('random matrices of every scale', () => {
    const random = seededRandom(11);
    for (let k = 0; k < 3000; k++) {
      const scale = 10 ** (random() * 12 - 6);
      const m = randomEntries(random, scale);
      const [large, small] = referenceSingularValues(m);
      const reference = small / large;
      const closed = inverseCondition2(...m);
      // Relative error 1e-9 away from isotropy; near κ = 1 see the next test.
      if (reference < 0.99) expect(Math.abs(closed - reference)).toBeLessThan(1e-9 * reference + 1e-15);
      else expect(Math.abs(closed - reference)).toBeLessThan(1e-7);
      expect(Math.abs(maxSingularValue2(...m) / large - 1)).toBeLessThan(1e-9);
    }
  });

  it('prescribed conditioning from 1/κ = 1e-3 to 1 (U Σ Vᵀ built from rotations)', () => {
    const random = seededRandom(12);
    for (const ratio of [1e-3, 0.01, 0.1, 0.5, 0.9, 0.999]) {
      for (let k = 0; k < 50; k++) {
        const sigma1 = 10 ** (random() * 4 - 2);
        const m = withSingularValues(random, sigma1, ratio * sigma1);
        // Rounding the built entries moves σ_2 by ~ε σ_1, i.e. ε/ratio relative: fine down to 1e-3.
        expect(Math.abs(inverseCondition2(...m) / ratio - 1)).toBeLessThan(1e-9);
        expect(Math.abs(maxSingularValue2(...m) / sigma1 - 1)).toBeLessThan(1e-12);
        const [large, small] = referenceSingularValues(m);
        expect(Math.abs(small / large / ratio - 1)).toBeLessThan(1e-9);
      }
    }
  });

  it('very ill-conditioned integer matrices, whose determinant is exact in floating point', () => {
    // Derived: σ_min σ_max = |det| for 2×2, so 1/κ = |det|/σ_max²; with integer entries below 2^26
    // the determinant is computed exactly, and σ_max (well conditioned) comes from the SVD.
    const random = seededRandom(14);
    for (let k = 0; k < 500; k++) {
      const x = 1 + Math.floor(random() * 2 ** 25);
      const y = 1 + Math.floor(random() * 2 ** 25);
      const e = Math.floor(random() * 7) - 3;
      const f = Math.floor(random() * 7) - 3;
      const m: Entries = [x, y, x + e, y + f];
      const det = Math.abs(x * f - y * e);
      const [large] = referenceSingularValues(m);
      const reference = det / (large * large);
      if (det === 0) expect(inverseCondition2(...m)).toBe(0);
      else expect(Math.abs(inverseCondition2(...m) / reference - 1)).toBeLessThan(1e-12);
    }
    // [[n, n + 1], [n − 1, n]]: det = 1, 1/κ ≈ 1/(4 n²) ≈ 1.4e-15 for n = 2^24.
    const n = 2 ** 24;
    const [large] = referenceSingularValues([n, n + 1, n - 1, n]);
    expect(Math.abs(inverseCondition2(n, n + 1, n - 1, n) / (1 / (large * large)) - 1)).toBeLessThan(1e-12);
  });

  it('near isotropy the closed form keeps about half the digits (square root of a cancelling difference)', () => {
    // Derived: 1/κ = 2|det|/(F + √(F² − 4 det²)); at κ = 1, F² − 4 det² is a difference of equal
    // numbers, so an absolute rounding of ε F² there becomes √ε F ≈ 1.5e-8 F after the root.
    const random = seededRandom(13);
    let worst = 0;
    for (let k = 0; k < 2000; k++) {
      const sigma = 10 ** (random() * 4 - 2);
      const m = withSingularValues(random, sigma, sigma);
      worst = Math.max(worst, Math.abs(inverseCondition2(...m) - 1), Math.abs(maxSingularValue2(...m) / sigma - 1));
    }
    expect(worst).toBeLessThan(1e-7);
  });

  it('singular and zero matrices give 1/κ = 0', () => {
    expect(inverseCondition2(1, 2, 2, 4)).toBe(0);
    expect(inverseCondition2(0, 0, 0, 0)).toBe(0);
    expect(inverseCondition2(0, 3, 0, 5)).toBe(0);
    expect(maxSingularValue2(0, 0, 0, 0)).toBe(0);
    // Rank one: σ_max = ‖a‖‖b‖ for the outer product a bᵀ (derived).
    expect(maxSingularValue2(3, 4, 6, 8)).toBeCloseTo(Math.hypot(1, 2) * Math.hypot(3, 4), 13);
  });
});

describe('symmetric eigenvalues against ml-matrix EVD', () => {
  it('minEigenSymmetric2 and maxEigenSymmetric2 on random symmetric matrices', () => {
    const random = seededRandom(21);
    for (let k = 0; k < 3000; k++) {
      const scale = 10 ** (random() * 12 - 6);
      const [a, b, , d] = randomEntries(random, scale);
      const values = new EigenvalueDecomposition(new Matrix([[a, b], [b, d]]), { assumeSymmetric: true }).realEigenvalues;
      const low = Math.min(...values);
      const high = Math.max(...values);
      const norm = Math.max(Math.abs(low), Math.abs(high));
      expect(Math.abs(minEigenSymmetric2(a, b, d) - low)).toBeLessThan(1e-14 * norm);
      expect(Math.abs(maxEigenSymmetric2(a, b, d) - high)).toBeLessThan(1e-14 * norm);
    }
  });
});

describe('generalizedEigen2 against Cholesky reduction and EVD', () => {
  /** λ of K v = λ M v by M = L Lᵀ, eig(L⁻¹ K L⁻ᵀ) (Golub & Van Loan, Matrix Computations, symmetric-definite problem; from memory). */
  function reference(k11: number, k12: number, k22: number, m11: number, m12: number, m22: number): [number, number] {
    const lower = new CholeskyDecomposition(new Matrix([[m11, m12], [m12, m22]])).lowerTriangularMatrix;
    const lowerInverse = inverse(lower);
    const reduced = lowerInverse.mmul(new Matrix([[k11, k12], [k12, k22]])).mmul(lowerInverse.transpose());
    const symmetric = reduced.add(reduced.transpose()).mul(0.5);
    const values = new EigenvalueDecomposition(symmetric, { assumeSymmetric: true }).realEigenvalues.slice().sort((x, y) => x - y);
    return [values[0]!, values[1]!];
  }

  /** Random symmetric positive definite matrix with condition number up to 10^maxDecades. */
  function randomSpd(random: () => number, maxDecades: number): [number, number, number] {
    const phi = random() * Math.PI;
    const high = 10 ** (random() * 6 - 3);
    const low = high * 10 ** (-random() * maxDecades);
    const c = Math.cos(phi);
    const s = Math.sin(phi);
    return [high * c * c + low * s * s, (high - low) * c * s, high * s * s + low * c * c];
  }

  it('positive definite K and M (stiffness and mass): both roots', () => {
    const random = seededRandom(31);
    const out = new Float64Array(2);
    for (let k = 0; k < 3000; k++) {
      // Condition numbers up to 1e3 each: the Cholesky reference itself loses ε κ(K) κ(M) on the smaller root.
      const [k11, k12, k22] = randomSpd(random, 3);
      const [m11, m12, m22] = randomSpd(random, 3);
      generalizedEigen2(k11, k12, k22, m11, m12, m22, out);
      const [low, high] = reference(k11, k12, k22, m11, m12, m22);
      expect(Math.abs(out[0]! / low - 1)).toBeLessThan(1e-8);
      expect(Math.abs(out[1]! / high - 1)).toBeLessThan(1e-8);
    }
  });

  it('singular stiffness (rank one) gives a zero root; indefinite K keeps its negative root', () => {
    const out = new Float64Array(2);
    // K = k u uᵀ, M = I: roots 0 and k (derived).
    generalizedEigen2(4 * 0.36, 4 * 0.48, 4 * 0.64, 1, 0, 1, out);
    expect(Math.abs(out[0]!)).toBeLessThan(1e-15);
    expect(out[1]).toBeCloseTo(4, 14);
    // K = diag(−2, 3), M = diag(1, 2): roots −2 and 1.5 (derived).
    generalizedEigen2(-2, 0, 3, 1, 0, 2, out);
    expect(out[0]).toBeCloseTo(-2, 14);
    expect(out[1]).toBeCloseTo(1.5, 14);
  });

  // Outside the engine's use (K_x = Σ k_i u_i u_iᵀ with k_i > 0 is never negative definite), but inside
  // the documented contract ("symmetric-definite pencil": K symmetric, M positive definite).
  it('negative definite K: both (negative) roots', () => {
    const out = new Float64Array(2);
    // K = diag(−2, −3), M = I: roots −3 and −2 (derived).
    generalizedEigen2(-2, 0, -3, 1, 0, 1, out);
    expect(out[0]).toBeCloseTo(-3, 14);
    expect(out[1]).toBeCloseTo(-2, 14);
  });
});
