/**
 * What `loopsmith check` reports about a study: the plausibility checks, a plain-text summary of every
 * section, and whether the baseline design meets the constraints. The command line prints it as is.
 */
import { designVariables } from '../mechanics/designSpace.js';
import { ARCHITECTURES } from '../architectures/index.js';
import { constraintBounds, constraintDefinitions, type ConstraintDefinition } from '../mechanics/evaluate.js';
import { metricInfo } from '../mechanics/metrics.js';
import { isUserError } from '../core/errors.js';
import { StudyError, type LoadedStudy } from '../study/parse.js';
import type { Study } from '../study/types.js';
import type { DesignVariable } from '../mechanics/designSpace.js';
import { evaluateDesign } from './design.js';
import { mirrorLimitWarning, unreachableTaskProblems } from './plausibility.js';
import { driveTrainSummary, staticSizingNote } from './driveNotes.js';
import { formatMetric, formatValue, table } from './text.js';

/** Whether the baseline meets the constraints (null: not evaluated), the failing ones, and a line saying so. */
export interface BaselineVerdict {
  readonly feasible: boolean | null;
  readonly failing: string[];
  readonly text: string;
}

/** The outcome of checking a study that can succeed. */
export interface StudyCheck {
  /** Things the user should know (the study still runs). */
  readonly warnings: readonly string[];
  readonly baseline: BaselineVerdict;
  /** The summary as `check` prints it: "<source>: valid", the study's sections, the baseline verdict. */
  readonly text: string;
  /** The same as data (SI units): what `check --json` prints. */
  readonly data: {
    readonly ok: true;
    readonly study: Study;
    readonly fileHash: string;
    readonly settingsHash: string;
    readonly designVariables: DesignVariable[];
    readonly constraints: ConstraintDefinition[];
    readonly baseline: BaselineVerdict;
    readonly warnings: readonly string[];
  };
}

/**
 * Checks a loaded study: throws a StudyError naming every reason it cannot succeed (a task point out of
 * reach of every design), else gives its warnings, the baseline verdict and the summary.
 * `source` names the study in the text (default: where it was loaded from).
 */
export function checkStudy(loaded: LoadedStudy, source: string = loaded.source): StudyCheck {
  const problems = unreachableTaskProblems(loaded.study);
  if (problems.length > 0) throw new StudyError(`${source}: the study cannot succeed:\n  - ${problems.join('\n  - ')}`);
  const mirror = mirrorLimitWarning(loaded.study);
  const sizing = staticSizingNote(loaded.study);
  const warnings = [...(mirror ? [mirror.message] : []), ...(sizing ? [sizing] : [])];
  const baseline = baselineVerdict(loaded.study);
  return {
    warnings,
    baseline,
    text: `${source}: valid\n\n${studySummary(loaded.study)}\n\n${baseline.text}`,
    data: {
      ok: true,
      study: loaded.study,
      fileHash: loaded.fileHash,
      settingsHash: loaded.settingsHash,
      designVariables: designVariables(loaded.study),
      constraints: constraintDefinitions(loaded.study),
      baseline,
      warnings,
    },
  };
}

/** Plain-text summary of a study (a comparison study: one block per member). */
export function studySummary(study: Study): string {
  if (study.members) {
    const lines = [`comparison study ${study.name} (${study.members.map((m) => m.architecture).join(' vs ')})${study.description ? ' — ' + study.description : ''}`];
    const vars = designVariables(study);
    lines.push(`design variables: ${vars.length} (${vars.map((v) => v.name).join(', ')}); "architecture" chooses the member, the other members' variables are carried but unused`);
    for (const member of study.members) lines.push('', `— member ${member.architecture} —`, memberSummary({ ...member, baseline: {} }));
    return lines.join('\n');
  }
  return `study ${study.name} (${study.architecture})${study.description ? ' — ' + study.description : ''}\n${memberSummary(study)}`;
}

/** Whether the study's baseline meets its constraints, as a line for `check` (and its JSON). */
export function baselineVerdict(study: Study): BaselineVerdict {
  if (study.members) return { feasible: null, failing: [], text: 'baseline: not evaluated for a comparison study (see: loopsmith evaluate)' };
  try {
    const { report } = evaluateDesign(study);
    const failing = report.constraints.filter((c) => !Number.isNaN(c.margin) && !c.satisfied).map((c) => c.name);
    const text = report.feasible
      ? 'baseline: feasible (every constraint holds)'
      : `baseline: NOT feasible — ${failing.join(', ')} fail (details: loopsmith evaluate STUDY); the optimizer does not need a feasible baseline, but it is worth knowing`;
    return { feasible: report.feasible, failing, text };
  } catch (error) {
    if (!isUserError(error)) throw error;
    return { feasible: null, failing: [], text: `baseline: cannot be evaluated (${error.message})` };
  }
}

function memberSummary(study: Study): string {
  const vars = designVariables(study);
  const lines: string[] = ['', geometryTable(study)];
  lines.push('', `working mode: ${study.workingModes.length > 1 ? 'chosen by the optimizer from ' + study.workingModes.join(', ') : study.workingModes[0]}; assembly mode: ${study.assemblyMode}`);
  if (study.architecture !== 'five-bar') lines.push(...actuatorLines(study));
  lines.push(`design variables: ${vars.length} (${vars.map((v) => v.name).join(', ') || 'none'})`);
  const g = study.gravity;
  lines.push(`gravity in the plane: (${g[0]}, ${g[1]}) m/s²; payload ${formatValue(study.payloadMass, 'mass')}; links: cranks ${study.links.cranks[0]!.label}; rods ${study.links.rods[0]!.label}`);
  lines.push(...driveLines(study), ...taskLines(study));
  const e = study.evaluation;
  lines.push(`evaluation: ${e.gridCells} grid cells, ${e.taskSamples} task samples, 1/κ ≥ ${e.minInverseCondition}, transmission angle ≥ ${formatValue(e.minTransmissionAngle, 'angle')}`);
  if (study.cell) lines.push(cellLine(study.cell));
  lines.push('', table(['objective', 'sense', 'meaning'], study.objectives.map((o) => [o.metric, o.sense, metricInfo(o.metric)!.description])));
  const constraints = constraintTable(study);
  if (constraints) lines.push('', constraints);
  const t = study.optimizer.termination;
  const stop = t.kind === 'generations' ? `${t.generations} generations (fixed)` : `until the front improves by less than ${t.tolerance * 100} % over ${t.window} generations, at most ${t.maxEvaluations} evaluations`;
  lines.push('', `optimizer: population ${study.optimizer.population}, seed ${study.optimizer.seed}; runs ${stop}`);
  return lines.join('\n');
}

/** One line on the cell section (docs/cell.md). */
function cellLine(cell: NonNullable<Study['cell']>): string {
  const parts: string[] = [];
  if (cell.zones.length > 0) parts.push(`zones ${cell.zones.map((z) => z.name).join(', ')}`);
  if (cell.cycleAsTask) parts.push('the duty cycle as a task');
  if (cell.keepOuts.length > 0) parts.push(`keep-outs ${cell.keepOuts.map((z) => z.name).join(', ')}`);
  const i = cell.interference;
  if (i) {
    const checks = [i.links ? 'links' : '', i.housings.some((h) => h) ? 'housings' : '', i.passiveMinAngle !== null ? `passive joints ≥ ${formatValue(i.passiveMinAngle, 'angle')}` : '', i.sliderLength !== null ? `slider gap (carriage ${formatValue(i.sliderLength, 'length')})` : ''];
    parts.push(`interference: ${checks.filter((c) => c).join(', ') || 'none'}`);
  }
  if (cell.allowance > 0) parts.push(`clearance ${formatValue(cell.allowance, 'length')}`);
  parts.push(`regular workspace ${cell.regular.aspect}:1 at ${formatValue(cell.regular.angle, 'angle')}`);
  return `cell: ${parts.join('; ')}`;
}

/** Every parameter: fixed, tied or variable, with bounds and baseline. */
function geometryTable(study: Study): string {
  const rows = ARCHITECTURES[study.architecture].parameters.map(({ name, kind: parameterKind }) => {
    const spec = study.geometry[name]!;
    const kind = parameterKind === 'angle' ? 'angle' : 'length';
    if (spec.kind === 'fixed') return [name, 'fixed', formatValue(spec.value, kind), ''];
    if (spec.kind === 'tied') return [name, 'tied', `= ${spec.to}`, ''];
    return [name, 'variable', `${formatValue(spec.min, kind)} … ${formatValue(spec.max, kind)}`, study.baseline[name] !== undefined ? formatValue(study.baseline[name] as number, kind) : '(none)'];
  });
  // Mounting of the base in the cell (docs/cell.md).
  const mounting = study.cell?.mounting;
  if (mounting) {
    for (const name of ['mount_x', 'mount_y', 'mount_angle'] as const) {
      const spec = mounting[name];
      const kind = name === 'mount_angle' ? 'angle' : 'length';
      if (spec.kind === 'fixed') rows.push([name, 'fixed', formatValue(spec.value, kind), '']);
      else rows.push([name, 'variable', `${formatValue(spec.min, kind)} … ${formatValue(spec.max, kind)}`, study.baseline[name] !== undefined ? formatValue(study.baseline[name] as number, kind) : '(none)']);
    }
  }
  return table(['parameter', 'kind', 'value or bounds', 'baseline'], rows);
}

/** Actuators, joint ranges, orientation and grid window (every architecture but the five-bar). */
function actuatorLines(study: Study): string[] {
  const actuators = ARCHITECTURES[study.architecture].actuators;
  const lines: string[] = [];
  const unit = actuators[0] === 'prismatic' ? 'slider strokes (m along the rail), efforts in N, speeds in m/s' : 'crank angles (rad), efforts in N·m, speeds in rad/s';
  lines.push(`actuators: ${actuators.length} × ${actuators[0]} — ${unit}`);
  const limits = study.jointLimits.map((r, i) => `${i + 1}: ${r ? `${formatValue(r.min, actuators[i] === 'prismatic' ? 'length' : 'angle')} … ${formatValue(r.max, actuators[i] === 'prismatic' ? 'length' : 'angle')}` : 'unlimited'}`);
  lines.push(`joint ranges: ${limits.join('; ')}`);
  const o = study.orientation;
  if (o) {
    const length = typeof o.characteristicLength === 'number' ? formatValue(o.characteristicLength, 'length') : o.characteristicLength === 'auto' ? 'auto (per design, best mean 1/κ over the task points)' : 'platform circumradius';
    lines.push(`orientation: φ0 ${formatValue(o.phi0, 'angle')}, required ± ${formatValue(o.range, 'angle')}, characteristic length ${length}, scan step ${formatValue(o.step, 'angle')}`);
  }
  if (study.evaluation.window) {
    const w = study.evaluation.window;
    lines.push(`grid window: x ${formatValue(w.xmin, 'length')} … ${formatValue(w.xmax, 'length')}, y ${formatValue(w.ymin, 'length')} … ${formatValue(w.ymax, 'length')}`);
  }
  return lines;
}

/** The fixed drives, the drive choice, or none; and the catalogue. */
function driveLines(study: Study): string[] {
  const lines: string[] = [];
  if (study.drives) {
    study.drives.forEach((d, i) =>
      lines.push(
        d.linear
          ? `drive ${i + 1}: ${d.label}: linear, rated ${formatValue(d.linear.ratedEffort, 'force')}, peak ${formatValue(d.linear.peakEffort, 'force')}, max ${formatValue(d.linear.maxSpeed, 'speed')} (at the slider)`
          : `drive ${i + 1}: ${d.label}: ratio ${d.gearRatio}, η ${d.efficiency}, rated ${formatValue(d.ratedTorque, 'torque')}, peak ${formatValue(d.peakTorque, 'torque')}, max ${formatValue(d.maxSpeed, 'angularSpeed')} (motor side)${d.lead !== undefined ? `, lead ${formatValue(d.lead, 'length')} per turn` : ''}`,
      ),
    );
  } else if (study.driveTrains) {
    lines.push(driveTrainSummary(study.driveTrains));
  } else if (study.driveChoice.kind !== 'fixed') {
    lines.push(`drives: chosen by the optimizer (${study.driveChoice.kind === 'shared' ? 'one option for both actuators' : 'one option per actuator'}) from ${study.driveChoice.options.map((o) => o.label).join(', ')}`);
  } else {
    lines.push('drives: none given (acceleration capability and resolution are not computed; no drive limits)');
  }
  if (study.driveCatalogue) lines.push(`drive catalogue: ${study.driveCatalogue.path} (${study.driveCatalogue.options.length} options)`);
  return lines;
}

/** The task region and the required speed and acceleration. */
function taskLines(study: Study): string[] {
  const lines: string[] = [];
  const r = study.task.region;
  if (r) {
    lines.push(
      r.shape === 'rectangle'
        ? `task region: rectangle ${formatValue(r.width, 'length')} × ${formatValue(r.height, 'length')} centred at (${formatValue(r.centreX, 'length')}, ${formatValue(r.centreY, 'length')})`
        : `task region: circle radius ${formatValue(r.radius, 'length')} centred at (${formatValue(r.centreX, 'length')}, ${formatValue(r.centreY, 'length')})`,
    );
  } else {
    lines.push('task region: none (per-pose metrics are taken over the whole usable workspace)');
  }
  lines.push(`required end-point speed ${formatValue(study.task.speed, 'speed')}, acceleration ${formatValue(study.task.acceleration, 'acceleration')}`);
  return lines;
}

/** Every constraint with its bounds and where it comes from, or undefined when there are none. */
function constraintTable(study: Study): string | undefined {
  const cons = constraintDefinitions(study);
  if (cons.length === 0) return undefined;
  const actuators = ARCHITECTURES[study.architecture].actuators;
  const drives = study.drives;
  const bound = (c: ConstraintDefinition, side: 'min' | 'max'): string => {
    if (c.driveLimit && !drives) return side === 'max' ? 'per drive' : '—';
    return formatMetric(c.metric, constraintBounds(c, study, drives)[side], actuators);
  };
  return table(['constraint', 'metric', 'min', 'max', 'from'], cons.map((c) => [c.name, c.metric, bound(c, 'min'), bound(c, 'max'), c.origin]));
}
