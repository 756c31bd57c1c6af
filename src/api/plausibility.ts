/**
 * Checks that a valid study can lead anywhere: a task region that some design within the bounds can
 * reach, and joint limits that treat the two sides of a mirror-symmetric five-bar or 2-PRR alike. They run at
 * study level through the public evaluation functions; the engine is not touched.
 */
import { chooseDesign } from './design.js';
import { Evaluator } from '../mechanics/evaluate.js';
import { METRIC_NAMES } from '../mechanics/metrics.js';
import type { JointRange } from '../core/pose.js';
import { ARCHITECTURES } from '../architectures/index.js';
import type { ParameterSpec, Study } from '../study/types.js';
import { formatQuantity } from '../study/units.js';

const mm = (v: number): string => formatQuantity(v, 'length');
const deg = (v: number): string => formatQuantity(v, 'angle');

/** Largest value a geometry parameter takes within the bounds (tied parameters follow their target). */
function upper(geometry: Readonly<Record<string, ParameterSpec>>, name: string): number {
  const spec = geometry[name];
  if (!spec) return 0;
  if (spec.kind === 'fixed') return spec.value;
  if (spec.kind === 'variable') return spec.max;
  return upper(geometry, spec.to);
}

function range(geometry: Readonly<Record<string, ParameterSpec>>, name: string): [number, number] {
  const spec = geometry[name];
  if (!spec) return [0, 0];
  if (spec.kind === 'fixed') return [spec.value, spec.value];
  if (spec.kind === 'variable') return [spec.min, spec.max];
  return range(geometry, spec.to);
}

/** Points of the task region that every design must reach: the corners of a rectangle, four points of a circle. */
function taskOutline(study: Study): [number, number][] {
  const r = study.task.region;
  if (!r) return [];
  if (r.shape === 'rectangle') {
    const w = r.width / 2;
    const h = r.height / 2;
    return [[r.centreX - w, r.centreY - h], [r.centreX + w, r.centreY - h], [r.centreX + w, r.centreY + h], [r.centreX - w, r.centreY + h]];
  }
  return [[r.centreX - r.radius, r.centreY], [r.centreX + r.radius, r.centreY], [r.centreX, r.centreY - r.radius], [r.centreX, r.centreY + r.radius]];
}

/**
 * Problems that make a five-bar study impossible: task-region points farther from the pivots than the
 * longest legs the bounds allow, for every base span within its bounds. Empty when none (or when the
 * study is not a plain five-bar study).
 */
export function unreachableTaskProblems(study: Study): string[] {
  if (study.members || study.architecture !== 'five-bar' || !study.task.region) return [];
  const g = study.geometry;
  const reach1 = upper(g, 'crank_1') + upper(g, 'rod_1');
  const reach2 = upper(g, 'crank_2') + upper(g, 'rod_2');
  const [spanMin, spanMax] = range(g, 'base_span');
  const [riseMin, riseMax] = range(g, 'base_rise');
  const problems: string[] = [];
  for (const [x, y] of taskOutline(study)) {
    let reachable = false;
    for (let i = 0; i <= 20 && !reachable; i++) {
      const span = spanMin + ((spanMax - spanMin) * i) / 20;
      for (let j = 0; j <= 4 && !reachable; j++) {
        const rise = riseMin + ((riseMax - riseMin) * j) / 4;
        reachable = Math.hypot(x + span / 2, y) <= reach1 && Math.hypot(x - span / 2, y - rise) <= reach2;
      }
    }
    if (!reachable) {
      const distance = Math.min(Math.hypot(x + spanMin / 2, y), Math.hypot(x - spanMin / 2, y));
      problems.push(
        `task.region: the point (${mm(x)}, ${mm(y)}) is out of reach of every design within the bounds: it lies at least ${mm(distance)} from a pivot, ` +
          `but the longest legs reach ${mm(Math.min(reach1, reach2))} (crank + rod at their upper bounds). Move the task region closer to the pivots or raise the upper bounds of crank and rod.`,
      );
    }
  }
  return problems;
}

/** The mirror image of a joint range about the vertical line between the pivots: θ → π − θ. */
export function mirroredRange(r: JointRange): JointRange {
  return { min: Math.PI - r.max, max: Math.PI - r.min };
}

function sameRangeModulo(a: JointRange, b: JointRange): boolean {
  const turn = 2 * Math.PI;
  const d = (((a.min - b.min) % turn) + turn) % turn;
  return Math.abs(a.max - a.min - (b.max - b.min)) < 1e-9 && (d < 1e-9 || turn - d < 1e-9);
}

export interface MirrorLimitWarning {
  readonly message: string;
  /** Usable workspace of the baseline with the study's limits and with actuator 2's mirrored [m²]. */
  readonly areaAsGiven: number;
  readonly areaMirrored: number;
  readonly mirrored: JointRange;
}

/** How one actuator's range maps to its mirror image for an arm whose legs mirror each other. */
interface MirrorRule {
  readonly mirror: (r: JointRange) => JointRange;
  readonly same: (a: JointRange, b: JointRange) => boolean;
  readonly format: (v: number) => string;
  /** The mirror line, in words. */
  readonly axis: string;
}

/**
 * The mirror rule of a study whose second leg is tied to the first and mirrors it, or undefined:
 * a five-bar with level pivots and elbows on opposite sides (θ → π − θ about the vertical between the
 * pivots), or a 2-PRR with the sliders on opposite sides of P (x → −x about the rail origin; derived
 * here: its rail is the line y = rail_height with origin x = 0, so the mirrored stroke of [a, b] is [−b, −a]).
 */
function mirrorRule(study: Study): MirrorRule | undefined {
  const g = study.geometry;
  const tied = (name: string, to: string): boolean => g[name]?.kind === 'tied' && (g[name] as { to: string }).to === to;
  const oppositeSides = study.workingModes.every((m) => m === '+-' || m === '-+');
  if (study.members || !oppositeSides || !tied('rod_2', 'rod_1')) return undefined;
  if (study.architecture === 'five-bar') {
    const rise = g['base_rise'];
    const level = rise === undefined || (rise.kind === 'fixed' && rise.value === 0);
    if (!tied('crank_2', 'crank_1') || !level) return undefined;
    return { mirror: mirroredRange, same: sameRangeModulo, format: deg, axis: 'the vertical' };
  }
  const architecture = ARCHITECTURES[study.architecture];
  // Two sliders on one rail (the 2-PRR): told apart by its actuators, not its name (one registry, no name lists).
  if (architecture.dof === 2 && architecture.actuators.every((a) => a === 'prismatic')) {
    const same = (a: JointRange, b: JointRange): boolean => Math.abs(a.min - b.min) < 1e-12 && Math.abs(a.max - b.max) < 1e-12;
    return { mirror: (r) => ({ min: -r.max, max: -r.min }), same, format: mm, axis: 'the rail origin (x = 0)' };
  }
  return undefined;
}

/**
 * An arm whose legs mirror each other (see mirrorRule: a five-bar, or a 2-PRR) but whose joint limits
 * are the same numbers for both actuators: unless the range is symmetric about the mirror line, one
 * side is clipped more than the other. Returns the warning with the baseline's usable area both ways,
 * or undefined.
 */
export function mirrorLimitWarning(study: Study): MirrorLimitWarning | undefined {
  const rule = mirrorRule(study);
  const [first, second] = study.jointLimits;
  if (!rule || !first || !second) return undefined;
  if (!rule.same(first, second) || rule.same(rule.mirror(first), second)) return undefined;
  const mirrored = rule.mirror(first);
  const areaIndex = METRIC_NAMES.indexOf('workspace_area');
  const area = (limits: readonly (JointRange | null)[]): number => {
    const choice = chooseDesign({ ...study, jointLimits: limits });
    return new Evaluator(choice.study).evaluate(choice.design).metrics[areaIndex]!;
  };
  let areas = '';
  let areaAsGiven = Number.NaN;
  let areaMirrored = Number.NaN;
  try {
    areaAsGiven = area([first, second]);
    areaMirrored = area([first, mirrored]);
    areas = `: on the baseline the usable workspace is ${areaAsGiven.toPrecision(3)} m² as given; with actuator 2 given the mirror image of actuator 1's range it would be ${areaMirrored.toPrecision(3)} m²`;
    // Without limits (rails without strokes have no bounded workspace: then this part is left out).
    const free = area([null, null]);
    const onlyFirst = area([first, null]);
    const onlySecond = area([null, second]);
    const pct = (a: number): string => `${free > 0 ? (((free - a) / free) * 100).toFixed(0) : '?'} %`;
    areas =
      `: on the baseline, actuator 1's limit alone removes ${pct(onlyFirst)} of the usable workspace and actuator 2's alone ${pct(onlySecond)}; ` +
      `together ${pct(areaAsGiven)} (${areaAsGiven.toPrecision(3)} of ${free.toPrecision(3)} m²); with actuator 2 given the mirror image of actuator 1's range it would be ${areaMirrored.toPrecision(3)} m²`;
  } catch {
    // A baseline that cannot be evaluated still gets the warning, with what could be computed.
  }
  return {
    message:
      `joint_limits: both actuators get ${rule.format(first.min)} … ${rule.format(first.max)}, but the arm is mirror-symmetric and that range is not symmetric about ${rule.axis}, so the two sides are clipped differently${areas}. ` +
      `Give each actuator the range you mean, e.g. the mirror image for a symmetric arm: joint_limits: { actuator_1: { min: ${rule.format(first.min)}, max: ${rule.format(first.max)} }, actuator_2: { min: ${rule.format(mirrored.min)}, max: ${rule.format(mirrored.max)} } }`,
    areaAsGiven,
    areaMirrored,
    mirrored,
  };
}
