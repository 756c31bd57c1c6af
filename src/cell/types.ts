/**
 * The study's `cell` section after parsing (SI: m, rad): task zones, keep-out zones, interference
 * checks, mounting variables and the regular workspace (docs/cell.md). Polygons are plain number
 * arrays of interleaved vertices (x0, y0, x1, y1, …) so the typed study hashes as canonical JSON.
 */
/** A mounting value: fixed, or a design variable between bounds (m or rad; same shape as a geometry ParameterSpec). */
export type CellParameter = { readonly kind: 'fixed'; readonly value: number } | { readonly kind: 'variable'; readonly min: number; readonly max: number };

/** A zone of the plane: an axis-aligned or rotated rectangle, a circle, or a simple polygon. */
export type CellShape =
  | { readonly shape: 'rectangle'; readonly centreX: number; readonly centreY: number; readonly width: number; readonly height: number; readonly angle: number }
  | { readonly shape: 'circle'; readonly centreX: number; readonly centreY: number; readonly radius: number }
  | { readonly shape: 'polygon'; readonly vertices: readonly number[] };

export type NamedShape = CellShape & { readonly name: string };

/** A drive housing about an actuated pivot: a circle of a radius, or a box (width along `angle`, height across). */
export type Housing =
  | { readonly shape: 'circle'; readonly radius: number }
  | { readonly shape: 'box'; readonly width: number; readonly height: number; readonly angle: number };

export interface InterferenceSpec {
  /** Check links against links of the other legs (legs crossing, rods against cranks). */
  readonly links: boolean;
  /** In-plane width of each leg's crank and rod, m (0 = centre line). */
  readonly crankWidth: readonly number[];
  readonly rodWidth: readonly number[];
  /** Housing per actuator (null = none), centred on the pivot, in the base frame. */
  readonly housings: readonly (Housing | null)[];
  /** Smallest included angle at a passive joint, rad (null = no limit). */
  readonly passiveMinAngle: number | null;
  /** Slider carriage length along its rail, m (null = no slider-gap check). */
  readonly sliderLength: number | null;
}

/** Mounting of the base relative to the task frame: position (m) and angle (rad), each fixed or a design variable. */
export interface MountingSpec {
  readonly mount_x: CellParameter;
  readonly mount_y: CellParameter;
  readonly mount_angle: CellParameter;
}

export const MOUNT_VARIABLES = ['mount_x', 'mount_y', 'mount_angle'] as const;
export type MountVariable = (typeof MOUNT_VARIABLES)[number];

/** The base pose of one design in the task frame. */
export interface Mount {
  readonly x: number;
  readonly y: number;
  readonly angle: number;
}

export interface CellSpec {
  /** Task zones (e.g. pick and place), each of which the usable workspace must hold. */
  readonly zones: readonly NamedShape[];
  /** The duty cycle's path counts as a task: `cycle_coverage`, and `min_clearance` along it. */
  readonly cycleAsTask: boolean;
  /** Zones no link may enter (a frame, a conveyor, a wall). */
  readonly keepOuts: readonly NamedShape[];
  /** Interference checks, or null when the study declares none. */
  readonly interference: InterferenceSpec | null;
  /** Clearance every check must keep, m: `min_clearance` is measured after subtracting it (default 0). */
  readonly allowance: number;
  /** Mounting variables, or null (the base at the task origin, unrotated). */
  readonly mounting: MountingSpec | null;
  /** Regular workspace: width/height ratio and angle of the rectangle (rad). */
  readonly regular: { readonly aspect: number; readonly angle: number };
}

/** Whether the usable workspace must honour the cell's clearance checks (keep-outs or interference declared). */
export function cellRestrictsWorkspace(cell: CellSpec | null | undefined): boolean {
  return !!cell && (cell.keepOuts.length > 0 || cell.interference !== null);
}
