/**
 * Fields for a workspace map of one design: every grid node's reach margin, usable margin, 1/κ(J),
 * leg transmission sines s_1, s_2 and det A, the usable region's labels, its largest inscribed circle
 * (radius and centre) and the home pose. Sampling is the evaluator's own (workspace.ts), so what a
 * map shows is what the metrics measured. Transitional: this file takes the five-bar's former model
 * type for src/report/map.ts; maps of every architecture call `sampleWorkspace` directly. Plain computation: no drawing here (see src/report).
 */
import { FiveBarPose, PoseStatus, reachableBox, solvePose, type FiveBarModel } from './fivebar.js';
import { fiveBar } from '../architectures/fivebar.js';
import { buildLeggedModel } from '../architectures/legged.js';
import { RIGID_MASSLESS, type ArchitectureModelBase, type PlanarArchitecture } from '../architectures/types.js';
import { sampleWorkspace } from './workspace.js';
import type { Study } from '../study/types.js';

export interface WorkspaceMapFields {
  /** Nodes per row and per column. */
  readonly nx: number;
  readonly ny: number;
  /** Position of node (0, 0), m. */
  readonly x0: number;
  readonly y0: number;
  /** Node spacing, m. */
  readonly h: number;
  /** Reach margin per node, m (≥ 0 where both legs reach). Row-major, index j·nx + i. */
  readonly reachMargin: Float64Array;
  /** Usable margin per node (see usableMargin; ≥ 0 where usable). */
  readonly usable: Float64Array;
  /** 1/κ(J) per node (0 where unreachable). */
  readonly inverseCondition: Float64Array;
  /** Leg transmission sines s_1, s_2 per node (0 where unreachable). */
  readonly s1: Float64Array;
  readonly s2: Float64Array;
  /** det A = cross(u_1, u_2) per node in the design's working mode (0 where unreachable). */
  readonly detA: Float64Array;
  /** Pose status per node (PoseStatus values). */
  readonly status: Uint8Array;
  /** Usable-region label per node (−1 outside every usable region). */
  readonly labels: Int32Array;
  /** Label of the usable workspace (the region the evaluator measures), or −1 when there is none. */
  readonly region: number;
  /** Usable margin restricted to that region: positive nodes of other regions made negative. */
  readonly regionMargin: Float64Array;
  /** Largest inscribed circle of the usable workspace: radius (as the inscribed_radius metric), m, and centre, m. */
  readonly inscribedRadius: number;
  readonly inscribedCentre: readonly [number, number] | null;
}

export interface HomePose {
  /** End point, m. */
  readonly x: number;
  readonly y: number;
  /** Where the point comes from. */
  readonly source: 'task-centre' | 'inscribed-centre';
  readonly status: PoseStatus;
  /** Pivots A_i, elbows C_i (m), when both legs reach. */
  readonly pivots: readonly [readonly [number, number], readonly [number, number]];
  readonly elbows: readonly [readonly [number, number], readonly [number, number]] | null;
}

/** Bounding box of the reachable set, m (the evaluator's box): null when the legs' discs do not overlap. */
export { reachableBox };

/** The kinematic leg model of a five-bar given in the former model type (masses do not shape a map). */
function kinematicModel(model: FiveBarModel): ArchitectureModelBase {
  return buildLeggedModel(
    'five-bar',
    2,
    [0, 1].map((i) => ({ actuator: 'revolute' as const, base: [model.pivotX[i]!, model.pivotY[i]!] as const, crank: model.crank[i]!, rod: model.rod[i]! })),
    model.sigma,
    {
      parameters: {}, workingMode: '++', assembly: model.assembly, jointLimits: model.jointLimits,
      rods: [RIGID_MASSLESS, RIGID_MASSLESS], payloadMass: 0, gravity: model.gravity, drives: null,
    },
  );
}

/**
 * Sample every field of the map on the evaluator's grid (`cells` across the longer side of the
 * reachable box; default the study's evaluation.grid_cells): a view of the one sampler
 * (workspace.ts `sampleWorkspace`). Returns null when nothing is reachable.
 */
export function sampleWorkspaceFields(study: Study, model: FiveBarModel, cells = study.evaluation.gridCells): WorkspaceMapFields | null {
  const sample = sampleWorkspace(study, fiveBar as unknown as PlanarArchitecture<ArchitectureModelBase>, kinematicModel(model), 0, cells);
  if (!sample) return null;
  const { grid, region } = sample;
  const { nx, ny, x0, y0, h } = grid;
  const n = nx * ny;
  const s1 = new Float64Array(n);
  const s2 = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    s1[k] = sample.legSines[2 * k]!;
    s2[k] = sample.legSines[2 * k + 1]!;
  }
  const reachMargin = Float64Array.from(grid.secondary.subarray(0, n));
  const usable = Float64Array.from(grid.values.subarray(0, n));
  const labels = Int32Array.from(grid.labels.subarray(0, n));
  const regionMargin = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    const v = usable[k]!;
    regionMargin[k] = labels[k] === region ? v : v >= 0 ? -v - 1e-300 : v;
  }
  const inscribedCentre = region >= 0 ? deepestNode(nx, ny, x0, y0, h, regionMargin) : null;
  return {
    nx, ny, x0, y0, h, reachMargin, usable, inverseCondition: sample.inverseCondition, s1, s2, detA: sample.mechanismSine,
    status: sample.status, labels, region, regionMargin, inscribedRadius: sample.inscribedRadius, inscribedCentre,
  };
}

/**
 * Node of a margin field (inside where ≥ 0) farthest from the field's zero crossings along cell
 * edges: the centre of the largest inscribed circle at node resolution. Brute force over inside
 * nodes and boundary points; fine for map-sized grids (not for the optimizer's hot loop).
 */
export function deepestNode(nx: number, ny: number, x0: number, y0: number, h: number, margin: Float64Array): [number, number] | null {
  const bx: number[] = [];
  const by: number[] = [];
  for (let j = 0; j < ny; j++) {
    for (let i = 0; i < nx; i++) {
      const k = j * nx + i;
      const v = margin[k]!;
      if (i + 1 < nx) {
        const w = margin[k + 1]!;
        if ((v >= 0) !== (w >= 0)) { bx.push(x0 + (i + v / (v - w)) * h); by.push(y0 + j * h); }
      }
      if (j + 1 < ny) {
        const w = margin[k + nx]!;
        if ((v >= 0) !== (w >= 0)) { bx.push(x0 + i * h); by.push(y0 + (j + v / (v - w)) * h); }
      }
    }
  }
  if (bx.length === 0) return null;
  const boundaryX = Float64Array.from(bx);
  const boundaryY = Float64Array.from(by);
  let best: [number, number] | null = null;
  let bestSq = -1;
  for (let j = 0; j < ny; j++) {
    for (let i = 0; i < nx; i++) {
      if (!(margin[j * nx + i]! >= 0)) continue;
      const cx = x0 + i * h;
      const cy = y0 + j * h;
      let minSq = Infinity;
      for (let b = 0; b < boundaryX.length && minSq > bestSq; b++) {
        const dx = boundaryX[b]! - cx;
        const dy = boundaryY[b]! - cy;
        const d = dx * dx + dy * dy;
        if (d < minSq) minSq = d;
      }
      if (minSq > bestSq) { bestSq = minSq; best = [cx, cy]; }
    }
  }
  return best;
}

/**
 * The pose a map draws the mechanism in: the task region's centre, or the centre of the usable
 * workspace's inscribed circle when the study gives no task region. Null when neither exists.
 */
export function homePose(study: Study, model: FiveBarModel, fields: WorkspaceMapFields | null): HomePose | null {
  const task = study.task.region;
  let x: number;
  let y: number;
  let source: HomePose['source'];
  if (task) {
    x = task.centreX; y = task.centreY; source = 'task-centre';
  } else if (fields?.inscribedCentre) {
    [x, y] = fields.inscribedCentre; source = 'inscribed-centre';
  } else {
    return null;
  }
  const pose = new FiveBarPose();
  const status = solvePose(model, pose, x, y);
  const pivots: HomePose['pivots'] = [[model.pivotX[0], model.pivotY[0]], [model.pivotX[1], model.pivotY[1]]];
  const elbows: HomePose['elbows'] = status === PoseStatus.Unreachable ? null : [[pose.c1x, pose.c1y], [pose.c2x, pose.c2y]];
  return { x, y, source, status, pivots, elbows };
}
