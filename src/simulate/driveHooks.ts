/**
 * What `simulateArchitecture` takes from the drive-train work (docs/drives.md): the way the loops
 * are held together, and an optional saturation of the commanded efforts at the drives' envelopes.
 */

/** Options added to a simulation by the drive-train features. */
export interface DriveSimulationHooks {
  /** 'stabilised' (default): Lagrange multipliers with Baumgarte stabilisation; 'perturbed': the singularly perturbed closure of perturbedChain.ts. */
  readonly formulation?: 'stabilised' | 'perturbed';
  /** Time constant ε of the perturbed closure, s (default 0.01). */
  readonly epsilon?: number;
  /** Clips the commanded joint efforts in place at the drives' limits for the joint speeds q̇ (N·m or N; rad/s or m/s). */
  readonly saturate?: (efforts: Float64Array, speeds: ArrayLike<number>) => void;
}
