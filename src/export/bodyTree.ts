/**
 * Placing the bodies of a `BodyTree` (src/architectures/types.ts) in the plane for given joint
 * coordinates: forward along every branch from the ground. Used by the candidate sheet (centres of
 * mass at the home pose, the loop-closure check) and by tests of the MJCF export.
 */
import type { BodyTree, TreeBody } from '../architectures/types.js';

/** A body frame in the plane: origin (m) and orientation (rad, from +x, counter-clockwise). */
export interface PlaneFrame {
  readonly x: number;
  readonly y: number;
  readonly angle: number;
}

/** A point given in a frame, in world coordinates. */
export function pointInFrame(frame: PlaneFrame, at: readonly [number, number]): [number, number] {
  const c = Math.cos(frame.angle);
  const s = Math.sin(frame.angle);
  return [frame.x + c * at[0] - s * at[1], frame.y + s * at[0] + c * at[1]];
}

/** Every body's frame for joint coordinates `joints` (tree order, rad or m). */
export function bodyFrames(tree: BodyTree, joints: ArrayLike<number>): Map<string, PlaneFrame> {
  const frames = new Map<string, PlaneFrame>();
  let k = 0;
  for (const body of tree.bodies) {
    const parent = body.parent === null ? { x: 0, y: 0, angle: 0 } : frames.get(body.parent);
    if (!parent) throw new Error(`body tree: "${body.name}" comes before its parent "${body.parent}"`);
    let [x, y] = body.parent === null ? [body.origin[0], body.origin[1]] : pointInFrame(parent, body.origin);
    let angle = parent.angle;
    if (body.joint) {
      const q = joints[k++]!;
      if (body.joint.kind === 'revolute') {
        angle = parent.angle + q;
      } else {
        const [ax, ay] = body.joint.axis;
        const c = Math.cos(parent.angle);
        const s = Math.sin(parent.angle);
        x += q * (c * ax - s * ay);
        y += q * (s * ax + c * ay);
      }
    }
    frames.set(body.name, { x, y, angle });
  }
  return frames;
}

/** World position of every site for joint coordinates `joints`. */
export function sitePositions(tree: BodyTree, joints: ArrayLike<number>): Map<string, [number, number]> {
  const frames = bodyFrames(tree, joints);
  const out = new Map<string, [number, number]>();
  for (const body of tree.bodies) {
    const frame = frames.get(body.name)!;
    for (const site of body.sites) out.set(site.name, pointInFrame(frame, site.at));
  }
  return out;
}

/** Largest distance between the two sites of any loop closure, m (0 when every loop is closed). */
export function loopClosureGap(tree: BodyTree, joints: ArrayLike<number>): number {
  const sites = sitePositions(tree, joints);
  let gap = 0;
  for (const c of tree.closures) {
    const a = sites.get(c.site1);
    const b = sites.get(c.site2);
    if (!a || !b) throw new Error(`body tree: closure "${c.name}" names a missing site`);
    gap = Math.max(gap, Math.hypot(a[0] - b[0], a[1] - b[1]));
  }
  return gap;
}

/** The bodies with a joint, in joint order. */
export function jointedBodies(tree: BodyTree): TreeBody[] {
  return tree.bodies.filter((b) => b.joint !== null);
}

/** Total mass of the tree, kg. */
export function treeMass(tree: BodyTree): number {
  return tree.bodies.reduce((sum, b) => sum + b.mass, 0);
}
