/**
 * Closed-form helpers for 2×2 matrices stored row-major in four numbers.
 * Everything here is allocation-free so that it can sit in the per-pose hot loop.
 */

/**
 * Inverse condition number 1/κ of the 2×2 matrix [a b; c d] (κ in the 2-norm).
 * Uses σ_min/σ_max = 2|det| / (F + √(F² − 4 det²)), F = ‖M‖_F², which has no cancellation.
 * Returns 0 for a singular or zero matrix.
 */
export function inverseCondition2(a: number, b: number, c: number, d: number): number {
  const frob = a * a + b * b + c * c + d * d;
  const det = Math.abs(a * d - b * c);
  if (frob === 0 || det === 0) return 0;
  const disc = Math.max(frob * frob - 4 * det * det, 0);
  return (2 * det) / (frob + Math.sqrt(disc));
}

/** Largest singular value of [a b; c d]. */
export function maxSingularValue2(a: number, b: number, c: number, d: number): number {
  const frob = a * a + b * b + c * c + d * d;
  const det = a * d - b * c;
  const disc = Math.max(frob * frob - 4 * det * det, 0);
  return Math.sqrt((frob + Math.sqrt(disc)) / 2);
}

/** Smallest eigenvalue of the symmetric matrix [a b; b d]. */
export function minEigenSymmetric2(a: number, b: number, d: number): number {
  const half = (a - d) / 2;
  return (a + d) / 2 - Math.sqrt(half * half + b * b);
}

/** Largest eigenvalue of the symmetric matrix [a b; b d]. */
export function maxEigenSymmetric2(a: number, b: number, d: number): number {
  const half = (a - d) / 2;
  return (a + d) / 2 + Math.sqrt(half * half + b * b);
}

/**
 * Eigenvalues λ of the symmetric-definite pencil K x = λ M x (2×2; K = [k11 k12; k12 k22],
 * M = [m11 m12; m12 m22], M positive definite). Written into out[0] (smaller) and out[1] (larger).
 * det(K − λM) = 0 ⇔ det(M) λ² − β λ + det(K) = 0 with β = k11 m22 + k22 m11 − 2 k12 m12.
 */
export function generalizedEigen2(
  k11: number, k12: number, k22: number,
  m11: number, m12: number, m22: number,
  out: Float64Array,
): void {
  const detM = m11 * m22 - m12 * m12;
  const detK = k11 * k22 - k12 * k12;
  const beta = k11 * m22 + k22 * m11 - 2 * k12 * m12;
  const disc = Math.sqrt(Math.max(beta * beta - 4 * detM * detK, 0));
  // Roots (β ± disc)/(2 detM); take the one without cancellation, the other from the product detK/detM.
  const q = beta >= 0 ? beta + disc : beta - disc;
  const first = q / (2 * detM);
  const second = q !== 0 ? (2 * detK) / q : 0;
  const small = Math.min(first, second);
  const large = Math.max(first, second);
  out[0] = small;
  out[1] = large;
}
