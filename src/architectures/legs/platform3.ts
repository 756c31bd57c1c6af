/**
 * The 3-DOF platforms' (3-RRR, 3-PRR, 3-RPR) share of `finishKinematics` (legged.ts), written out for
 * three legs: the same operations in the same order as the general loops (so the same numbers to the
 * last bit), without the loops over n, the generic inverse and the branches on the column index.
 * From A and B already in the pose: J⁻¹ = B⁻¹A, J_h⁻¹ = B⁻¹ A diag(1, 1, 1/L), det A and
 * J = A⁻¹B (NaN when det A = 0), J_h = diag(1, 1, L) J, 1/κ(J_h) of the matrix M with rows
 * (Π_{j≠i} B_jj) row_i(A_h), and the mechanism sine det A_h / Π‖row_i(A_h)‖.
 */
import { inverseCondition3 } from '../dense.js';
import type { ArchitectureModelBase, ArchitecturePose } from '../types.js';

export function finishKinematics3(model: ArchitectureModelBase, pose: ArchitecturePose): void {
  const L = model.characteristicLength;
  const { A, B } = pose;
  const a0 = A[0]!, a1 = A[1]!, a2 = A[2]!, a3 = A[3]!, a4 = A[4]!, a5 = A[5]!, a6 = A[6]!, a7 = A[7]!, a8 = A[8]!;
  const b0 = B[0]!, b1 = B[4]!, b2 = B[8]!;
  const c0 = a4 * a8 - a5 * a7;
  const det = a0 * c0 - a1 * (a3 * a8 - a5 * a6) + a2 * (a3 * a7 - a4 * a6);
  pose.detA = det;
  // A margins-only solve (ArchitecturePose.marginOnly) leaves J, J⁻¹, J_h, J_h⁻¹ unwritten.
  if (!pose.marginOnly) writeJacobians3(model.characteristicLength, pose, det, c0);
  // M rows (Π_{j≠i} B_jj) row_i(A_h); the row norms of A_h.
  const m = pose.work2;
  const h2 = a2 / L, h5 = a5 / L, h8 = a8 / L;
  const s0 = b1 * b2, s1 = b0 * b2, s2 = b0 * b1;
  m[0] = s0 * a0; m[1] = s0 * a1; m[2] = s0 * h2;
  m[3] = s1 * a3; m[4] = s1 * a4; m[5] = s1 * h5;
  m[6] = s2 * a6; m[7] = s2 * a7; m[8] = s2 * h8;
  const rowProduct = Math.sqrt(a0 * a0 + a1 * a1 + h2 * h2) * Math.sqrt(a3 * a3 + a4 * a4 + h5 * h5) * Math.sqrt(a6 * a6 + a7 * a7 + h8 * h8);
  pose.inverseCondition = inverseCondition3(m);
  pose.mechanismSine = rowProduct > 0 ? det / L / rowProduct : 0;
}

/** J⁻¹, J_h⁻¹, A⁻¹ (into work), J and J_h from A, B, det A and its first cofactor c0. */
function writeJacobians3(L: number, pose: ArchitecturePose, det: number, c0: number): void {
  const { A, B, J, Jinv, Jh, Jhinv, work } = pose;
  const a0 = A[0]!, a1 = A[1]!, a2 = A[2]!, a3 = A[3]!, a4 = A[4]!, a5 = A[5]!, a6 = A[6]!, a7 = A[7]!, a8 = A[8]!;
  const b0 = B[0]!, b1 = B[4]!, b2 = B[8]!;
  // J⁻¹ = B⁻¹A and J_h⁻¹ (the φ column over L).
  let v = a0 / b0; Jinv[0] = v; Jhinv[0] = v;
  v = a1 / b0; Jinv[1] = v; Jhinv[1] = v;
  v = a2 / b0; Jinv[2] = v; Jhinv[2] = v / L;
  v = a3 / b1; Jinv[3] = v; Jhinv[3] = v;
  v = a4 / b1; Jinv[4] = v; Jhinv[4] = v;
  v = a5 / b1; Jinv[5] = v; Jhinv[5] = v / L;
  v = a6 / b2; Jinv[6] = v; Jhinv[6] = v;
  v = a7 / b2; Jinv[7] = v; Jhinv[7] = v;
  v = a8 / b2; Jinv[8] = v; Jhinv[8] = v / L;
  // A⁻¹ by the adjugate (dense.ts invert), J = A⁻¹B.
  if (det === 0) {
    J.fill(Number.NaN);
    Jh.fill(Number.NaN);
  } else {
    const r = 1 / det;
    const i0 = c0 * r, i1 = (a2 * a7 - a1 * a8) * r, i2 = (a1 * a5 - a2 * a4) * r;
    const i3 = (a5 * a6 - a3 * a8) * r, i4 = (a0 * a8 - a2 * a6) * r, i5 = (a2 * a3 - a0 * a5) * r;
    const i6 = (a3 * a7 - a4 * a6) * r, i7 = (a1 * a6 - a0 * a7) * r, i8 = (a0 * a4 - a1 * a3) * r;
    work[0] = i0; work[1] = i1; work[2] = i2; work[3] = i3; work[4] = i4; work[5] = i5; work[6] = i6; work[7] = i7; work[8] = i8;
    v = i0 * b0; J[0] = v; Jh[0] = v;
    v = i1 * b1; J[1] = v; Jh[1] = v;
    v = i2 * b2; J[2] = v; Jh[2] = v;
    v = i3 * b0; J[3] = v; Jh[3] = v;
    v = i4 * b1; J[4] = v; Jh[4] = v;
    v = i5 * b2; J[5] = v; Jh[5] = v;
    v = i6 * b0; J[6] = v; Jh[6] = v * L;
    v = i7 * b1; J[7] = v; Jh[7] = v * L;
    v = i8 * b2; J[8] = v; Jh[8] = v * L;
  }
}
