/**
 * Body bookkeeping of the leg layer: the offsets of the velocity maps in pose.work2 and the sum of
 * one body into D and τ_g (D += m VᵀV + I wᵀw, τ_g −= m Vᵀγ; the reduced model of a closed chain,
 * body by body).
 */
import type { ArchitecturePose } from '../types.js';
import type { LegModelView } from './types.js';

/** Offsets into pose.work2: centre-of-mass velocity map rows (VX, VY), angular map (W), distal pin map (VBX, VBY). */
export const VX = 0;
export const VY = 3;
export const W = 6;
export const VBX = 9;
export const VBY = 12;

/** Adds one body with centre-of-mass velocity map V (rows in work2[VX..], work2[VY..]) and angular map w (work2[W..]). */
export function addBody(n: number, pose: ArchitecturePose, mass: number, inertia: number, gx: number, gy: number): void {
  const v = pose.work2;
  const D = pose.D;
  for (let a = 0; a < n; a++) {
    const vax = v[VX + a]!;
    const vay = v[VY + a]!;
    const wa = v[W + a]!;
    for (let b = a; b < n; b++) {
      D[a * n + b] = D[a * n + b]! + mass * (vax * v[VX + b]! + vay * v[VY + b]!) + inertia * wa * v[W + b]!;
    }
    pose.tauG[a] = pose.tauG[a]! - mass * (vax * gx + vay * gy);
  }
}

/**
 * A rod of fixed length from a proximal joint moving at (pvx, pvy) per unit q̇_i to B_i: its rate
 * β̇_i = cross(u_i, Ḃ_i − proximal velocity)/d_i (written to pose.rodRate) and its body (centre of
 * mass at rodComDistance from the proximal joint).
 */
export function addProximalRod(model: LegModelView, i: number, pose: ArchitecturePose, pvx: number, pvy: number, gx: number, gy: number): void {
  const n = model.dof;
  const v = pose.work2;
  const ux = pose.rodDirection[2 * i]!;
  const uy = pose.rodDirection[2 * i + 1]!;
  const d = model.rod[i]!;
  const crossProximal = ux * pvy - uy * pvx;
  for (let k = 0; k < n; k++) {
    let w = ux * v[VBY + k]! - uy * v[VBX + k]!;
    if (k === i) w -= crossProximal;
    pose.rodRate[i * n + k] = w / d;
  }
  const b = model.rodComDistance[i]!;
  for (let k = 0; k < n; k++) {
    const w = pose.rodRate[i * n + k]!;
    v[VX + k] = (k === i ? pvx : 0) - b * uy * w;
    v[VY + k] = (k === i ? pvy : 0) + b * ux * w;
    v[W + k] = w;
  }
  addBody(n, pose, model.rodMass[i]!, model.rodInertiaAboutCom[i]!, gx, gy);
}

/** Rod body of a fixed-length rod (for body lists): centre of mass at rodComDistance from the proximal joint. */
export function rodBodyCentre(model: LegModelView, i: number, pose: ArchitecturePose): [number, number] {
  const b = model.rodComDistance[i]!;
  return [pose.proximalJoint[2 * i]! + b * pose.rodDirection[2 * i]!, pose.proximalJoint[2 * i + 1]! + b * pose.rodDirection[2 * i + 1]!];
}
