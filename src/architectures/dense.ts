/**
 * Small dense matrix helpers for the architectures (n ≤ 3), row-major in Float64Array buffers.
 * Entry (i, j) of an n×n matrix M sits at M[i * n + j]. Nothing here allocates: every routine writes
 * into buffers the caller owns, so they can run once per pose in the hot loop.
 */

/** Largest matrix order these helpers handle. */
export const MAX_ORDER = 3;
/** Length of the work buffer every routine below may use (Float64Array of at least this many). */
export const WORK_LENGTH = 4 * MAX_ORDER * MAX_ORDER;

/** Determinant of an n×n matrix (n = 1, 2, 3). */
export function determinant(n: number, m: Float64Array): number {
  if (n === 1) return m[0]!;
  if (n === 2) return m[0]! * m[3]! - m[1]! * m[2]!;
  return (
    m[0]! * (m[4]! * m[8]! - m[5]! * m[7]!) -
    m[1]! * (m[3]! * m[8]! - m[5]! * m[6]!) +
    m[2]! * (m[3]! * m[7]! - m[4]! * m[6]!)
  );
}

/**
 * Inverse of an n×n matrix by its adjugate, written into out (out must not alias m). Returns the
 * determinant; when it is 0 the content of out is undefined.
 */
export function invert(n: number, m: Float64Array, out: Float64Array): number {
  const det = determinant(n, m);
  if (det === 0) return 0;
  const r = 1 / det;
  if (n === 1) {
    out[0] = r;
  } else if (n === 2) {
    out[0] = m[3]! * r; out[1] = -m[1]! * r;
    out[2] = -m[2]! * r; out[3] = m[0]! * r;
  } else {
    out[0] = (m[4]! * m[8]! - m[5]! * m[7]!) * r;
    out[1] = (m[2]! * m[7]! - m[1]! * m[8]!) * r;
    out[2] = (m[1]! * m[5]! - m[2]! * m[4]!) * r;
    out[3] = (m[5]! * m[6]! - m[3]! * m[8]!) * r;
    out[4] = (m[0]! * m[8]! - m[2]! * m[6]!) * r;
    out[5] = (m[2]! * m[3]! - m[0]! * m[5]!) * r;
    out[6] = (m[3]! * m[7]! - m[4]! * m[6]!) * r;
    out[7] = (m[1]! * m[6]! - m[0]! * m[7]!) * r;
    out[8] = (m[0]! * m[4]! - m[1]! * m[3]!) * r;
  }
  return det;
}

/** out = a · b (n×n each; out must not alias a or b). */
export function multiply(n: number, a: Float64Array, b: Float64Array, out: Float64Array): void {
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      let sum = 0;
      for (let k = 0; k < n; k++) sum += a[i * n + k]! * b[k * n + j]!;
      out[i * n + j] = sum;
    }
  }
}

/** out = aᵀ · b (n×n each; out must not alias a or b). */
export function multiplyTransposeLeft(n: number, a: Float64Array, b: Float64Array, out: Float64Array): void {
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      let sum = 0;
      for (let k = 0; k < n; k++) sum += a[k * n + i]! * b[k * n + j]!;
      out[i * n + j] = sum;
    }
  }
}

/** Euclidean norm of row i of an n×n matrix. */
export function rowNorm(n: number, m: Float64Array, row: number): number {
  let sum = 0;
  for (let k = 0; k < n; k++) {
    const v = m[row * n + k]!;
    sum += v * v;
  }
  return Math.sqrt(sum);
}

/**
 * Singular values of an n×n matrix, descending, into out[0..n). One-sided Jacobi (Hestenes): plane
 * rotations make the columns of a copy mutually orthogonal; the singular values are then the column
 * norms. Accurate to a few ulps relative to σ_max, also for the smallest one. Uses work[0..n² + n).
 */
export function singularValues(n: number, m: Float64Array, work: Float64Array, out: Float64Array): void {
  singularValuesInWork(n, m, work);
  for (let j = 0; j < n; j++) out[j] = work[n * n + j]!;
}

/** As singularValues, leaving them in work[n²..n² + n) (descending). */
function singularValuesInWork(n: number, m: Float64Array, work: Float64Array): void {
  const size = n * n;
  for (let k = 0; k < size; k++) work[k] = m[k]!;
  for (let sweep = 0; sweep < 40; sweep++) {
    let rotated = false;
    for (let p = 0; p < n - 1; p++) {
      for (let q = p + 1; q < n; q++) {
        let alpha = 0;
        let beta = 0;
        let gamma = 0;
        for (let i = 0; i < n; i++) {
          const wp = work[i * n + p]!;
          const wq = work[i * n + q]!;
          alpha += wp * wp;
          beta += wq * wq;
          gamma += wp * wq;
        }
        if (gamma === 0 || Math.abs(gamma) <= 1e-17 * Math.sqrt(alpha * beta)) continue;
        rotated = true;
        const zeta = (beta - alpha) / (2 * gamma);
        const t = (zeta >= 0 ? 1 : -1) / (Math.abs(zeta) + Math.sqrt(1 + zeta * zeta));
        const c = 1 / Math.sqrt(1 + t * t);
        const s = c * t;
        for (let i = 0; i < n; i++) {
          const wp = work[i * n + p]!;
          const wq = work[i * n + q]!;
          work[i * n + p] = c * wp - s * wq;
          work[i * n + q] = s * wp + c * wq;
        }
      }
    }
    if (!rotated) break;
  }
  for (let j = 0; j < n; j++) {
    let sum = 0;
    for (let i = 0; i < n; i++) sum += work[i * n + j]! ** 2;
    work[size + j] = Math.sqrt(sum);
  }
  // Insertion sort, descending (n ≤ 3).
  for (let i = 1; i < n; i++) {
    const v = work[size + i]!;
    let k = i - 1;
    while (k >= 0 && work[size + k]! < v) {
      work[size + k + 1] = work[size + k]!;
      k--;
    }
    work[size + k + 1] = v;
  }
}

/**
 * Inverse condition number σ_min/σ_max (2-norm) of a 3×3 matrix M in closed form (no rotation
 * sweeps): the eigenvalues λ_1 ≥ λ_2 ≥ λ_3 of S = MᵀM by the trigonometric solution of the
 * symmetric 3×3 eigenproblem on the deviator S − (tr S/3) I (Smith 1961, "Eigenvalues of a
 * symmetric 3 × 3 matrix", Communications of the ACM 4(4):168), accurate to a few ulps of λ_1.
 * When λ_3 is below 10⁻⁴ λ_1 (near a singularity) it is taken from det(S) = λ_1 λ_2 λ_3 with det M
 * from cofactors instead, which keeps its relative accuracy. 0 for a singular or zero matrix.
 */
export function inverseCondition3(m: Float64Array): number {
  const det = determinant(3, m);
  if (det === 0 || !Number.isFinite(det)) return 0;
  gramExtremes3(m, det);
  const inv = Math.sqrt(Math.max(gram[1]!, 0) / gram[0]!);
  return inv > 1 ? 1 : inv;
}

/** Largest singular value of a 3×3 matrix (closed form, as inverseCondition3). */
export function maxSingularValue3(m: Float64Array): number {
  gramExtremes3(m, determinant(3, m));
  return Math.sqrt(Math.max(gram[0]!, 0));
}

/** λ_max and λ_min of MᵀM into gram[0], gram[1] (see inverseCondition3). */
const gram = new Float64Array(2);
function gramExtremes3(m: Float64Array, det: number): void {
  const m0 = m[0]!, m1 = m[1]!, m2 = m[2]!, m3 = m[3]!, m4 = m[4]!, m5 = m[5]!, m6 = m[6]!, m7 = m[7]!, m8 = m[8]!;
  // S = MᵀM (columns' dot products).
  const s00 = m0 * m0 + m3 * m3 + m6 * m6;
  const s11 = m1 * m1 + m4 * m4 + m7 * m7;
  const s22 = m2 * m2 + m5 * m5 + m8 * m8;
  const s01 = m0 * m1 + m3 * m4 + m6 * m7;
  const s02 = m0 * m2 + m3 * m5 + m6 * m8;
  const s12 = m1 * m2 + m4 * m5 + m7 * m8;
  const q = (s00 + s11 + s22) / 3;
  const d0 = s00 - q;
  const d1 = s11 - q;
  const d2 = s22 - q;
  const p2 = (d0 * d0 + d1 * d1 + d2 * d2 + 2 * (s01 * s01 + s02 * s02 + s12 * s12)) / 6;
  if (!(p2 > 0)) {
    gram[0] = q;
    gram[1] = q;
    return;
  }
  const p = Math.sqrt(p2);
  // r = det((S − qI)/p)/2 ∈ [−1, 1].
  const detDev = d0 * (d1 * d2 - s12 * s12) - s01 * (s01 * d2 - s12 * s02) + s02 * (s01 * s12 - d1 * s02);
  let r = detDev / (2 * p2 * p);
  r = r > 1 ? 1 : r < -1 ? -1 : r;
  const phi = Math.acos(r) / 3;
  const l1 = q + 2 * p * Math.cos(phi);
  let l3 = q + 2 * p * Math.cos(phi + (2 * Math.PI) / 3);
  if (l3 < 1e-4 * l1) l3 = (det * det) / (l1 * (3 * q - l1 - l3));
  gram[0] = l1;
  gram[1] = l3;
}

/**
 * Eigenvalues of a symmetric n×n matrix, ascending, into out[0..n) (cyclic Jacobi). Only the upper
 * triangle is read (of the matrix starting at s[sOffset]). Uses work[0..n²).
 */
export function symmetricEigenvalues(n: number, s: Float64Array, work: Float64Array, out: Float64Array, sOffset = 0): void {
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) work[i * n + j] = j >= i ? s[sOffset + i * n + j]! : s[sOffset + j * n + i]!;
  }
  for (let sweep = 0; sweep < 50; sweep++) {
    let off = 0;
    let diagonal = 0;
    for (let i = 0; i < n; i++) {
      diagonal += work[i * n + i]! ** 2;
      for (let j = i + 1; j < n; j++) off += work[i * n + j]! ** 2;
    }
    if (off <= 1e-32 * diagonal || off === 0) break;
    for (let p = 0; p < n - 1; p++) {
      for (let q = p + 1; q < n; q++) {
        const apq = work[p * n + q]!;
        if (apq === 0) continue;
        const app = work[p * n + p]!;
        const aqq = work[q * n + q]!;
        const theta = (aqq - app) / (2 * apq);
        const t = (theta >= 0 ? 1 : -1) / (Math.abs(theta) + Math.sqrt(1 + theta * theta));
        const c = 1 / Math.sqrt(1 + t * t);
        const sn = t * c;
        // A ← Gᵀ A G with G the rotation in the (p, q) plane.
        for (let k = 0; k < n; k++) {
          const akp = work[k * n + p]!;
          const akq = work[k * n + q]!;
          work[k * n + p] = c * akp - sn * akq;
          work[k * n + q] = sn * akp + c * akq;
        }
        for (let k = 0; k < n; k++) {
          const apk = work[p * n + k]!;
          const aqk = work[q * n + k]!;
          work[p * n + k] = c * apk - sn * aqk;
          work[q * n + k] = sn * apk + c * aqk;
        }
      }
    }
  }
  for (let i = 0; i < n; i++) out[i] = work[i * n + i]!;
  for (let i = 1; i < n; i++) {
    const v = out[i]!;
    let k = i - 1;
    while (k >= 0 && out[k]! > v) {
      out[k + 1] = out[k]!;
      k--;
    }
    out[k + 1] = v;
  }
}

/**
 * Eigenvalues λ of the symmetric-definite pencil K v = λ M v (M positive definite), ascending, into
 * out[0..n). Cholesky M = L Lᵀ, then the eigenvalues of C = L⁻¹ K L⁻ᵀ. Returns false (out filled
 * with NaN) when M is not positive definite. Uses work[0..3n²).
 */
export function generalizedEigenvalues(n: number, k: Float64Array, m: Float64Array, work: Float64Array, out: Float64Array): boolean {
  const size = n * n;
  // Layout of work: L at [0, n²), Y = L⁻¹K at [n², 2n²), C at [2n², 3n²); Jacobi reuses [0, n²).
  const L = 0;
  const Y = size;
  const C = 2 * size;
  for (let i = 0; i < size; i++) work[L + i] = 0;
  for (let j = 0; j < n; j++) {
    let diag = m[j * n + j]!;
    for (let p = 0; p < j; p++) diag -= work[L + j * n + p]! ** 2;
    if (!(diag > 0)) {
      for (let i = 0; i < n; i++) out[i] = Number.NaN;
      return false;
    }
    const ljj = Math.sqrt(diag);
    work[L + j * n + j] = ljj;
    for (let i = j + 1; i < n; i++) {
      let v = m[i * n + j]!;
      for (let p = 0; p < j; p++) v -= work[L + i * n + p]! * work[L + j * n + p]!;
      work[L + i * n + j] = v / ljj;
    }
  }
  // Y = L⁻¹ K (forward substitution per column).
  for (let col = 0; col < n; col++) {
    for (let i = 0; i < n; i++) {
      let v = k[i * n + col]!;
      for (let p = 0; p < i; p++) v -= work[L + i * n + p]! * work[Y + p * n + col]!;
      work[Y + i * n + col] = v / work[L + i * n + i]!;
    }
  }
  // C = Y L⁻ᵀ: row r of C solves L z = row r of Y (C is symmetric).
  for (let row = 0; row < n; row++) {
    for (let i = 0; i < n; i++) {
      let v = work[Y + row * n + i]!;
      for (let p = 0; p < i; p++) v -= work[L + i * n + p]! * work[C + row * n + p]!;
      work[C + row * n + i] = v / work[L + i * n + i]!;
    }
  }
  symmetricEigenvalues(n, work, work, out, C);
  return true;
}

/** Solves the n×n system M z = r in place of r by Gaussian elimination with partial pivoting. Returns false when singular. Uses work[0..n²). */
export function solveInPlace(n: number, m: Float64Array, r: Float64Array, work: Float64Array): boolean {
  for (let k = 0; k < n * n; k++) work[k] = m[k]!;
  for (let col = 0; col < n; col++) {
    let pivot = col;
    for (let i = col + 1; i < n; i++) if (Math.abs(work[i * n + col]!) > Math.abs(work[pivot * n + col]!)) pivot = i;
    const pv = work[pivot * n + col]!;
    if (pv === 0 || !Number.isFinite(pv)) return false;
    if (pivot !== col) {
      for (let j = 0; j < n; j++) {
        const t = work[col * n + j]!;
        work[col * n + j] = work[pivot * n + j]!;
        work[pivot * n + j] = t;
      }
      const t = r[col]!;
      r[col] = r[pivot]!;
      r[pivot] = t;
    }
    for (let i = col + 1; i < n; i++) {
      const f = work[i * n + col]! / pv;
      if (f === 0) continue;
      for (let j = col; j < n; j++) work[i * n + j] = work[i * n + j]! - f * work[col * n + j]!;
      r[i] = r[i]! - f * r[col]!;
    }
  }
  for (let i = n - 1; i >= 0; i--) {
    let v = r[i]!;
    for (let j = i + 1; j < n; j++) v -= work[i * n + j]! * r[j]!;
    r[i] = v / work[i * n + i]!;
  }
  return true;
}
