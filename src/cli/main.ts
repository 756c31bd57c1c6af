/**
 * The `loopsmith` command line: thin glue over the programmatic API in src/api.
 * Errors a user can cause end with one message and exit code 1; a bad command line exits with 2.
 */
import { LoopsmithUserError } from '../core/errors.js';
import { existsSync, writeFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import yargs, { type Argv } from 'yargs';
import { evaluateDesign, probeArchitectureDesign, probeDesign } from '../api/design.js';
import { designVariables, studyActuators, variableKind } from '../mechanics/designSpace.js';
import { ARCHITECTURES } from '../architectures/index.js';
import { constraintBounds, constraintDefinitions } from '../mechanics/evaluate.js';
import { METRICS, metricInfo } from '../mechanics/metrics.js';
import { loadStudyFile, StudyError } from '../study/parse.js';
import { STUDY_TEMPLATE } from '../study/template.js';
import { loopsmithVersion } from '../core/version.js';
import { parseQuantity } from '../study/units.js';
import type { Study } from '../study/types.js';
import { formatMetric, formatValue, table, toJson } from './format.js';
import { registerStoreCommands } from './storeCommands.js';
import { registerReportCommands } from './reportCommands.js';
import { registerExportCommands } from './exportCommands.js';
import { registerSimulateCommands } from './simulateCommands.js';
import { mirrorLimitWarning, unreachableTaskProblems } from '../api/plausibility.js';
import { taskPointFailures, type TaskPointFailures } from './taskPoints.js';
import { checkOverrides, checkPointText, joinNegativeValues, UsageError, UserError } from './argChecks.js';
import { programName, setInvocationArguments } from './invocation.js';
import { registerScaleCommands } from './scaleCommands.js';
import { builtArmRows, registerAccuracyCommands } from './accuracyCommands.js';

export { UserError, UsageError };

/** Errors of other libraries whose message is meant for the user (SQLite refusing a file or a query). */
const FOREIGN_USER_ERROR_NAMES = new Set(['SqliteError', 'ReportError']);

/** Errors a user can cause: every LoopsmithUserError (src/core/errors.ts), plus SQLite's own. */
export function isUserError(error: unknown): error is Error {
  return error instanceof LoopsmithUserError || (error instanceof Error && FOREIGN_USER_ERROR_NAMES.has(error.name));
}

const out = (text: string): void => {
  process.stdout.write(text.endsWith('\n') ? text : text + '\n');
};
const warn = (text: string): void => {
  process.stderr.write(`loopsmith: warning: ${text}\n`);
};

function schemaPath(): string {
  return fileURLToPath(new URL('../study/study.schema.json', import.meta.url));
}

function studySummary(study: Study): string {
  if (study.members) {
    const lines = [`comparison study ${study.name} (${study.members.map((m) => m.architecture).join(' vs ')})${study.description ? ' — ' + study.description : ''}`];
    const vars = designVariables(study);
    lines.push(`design variables: ${vars.length} (${vars.map((v) => v.name).join(', ')}); "architecture" chooses the member, the other members' variables are carried but unused`);
    for (const member of study.members) lines.push('', `— member ${member.architecture} —`, memberSummary({ ...member, baseline: {} }));
    return lines.join('\n');
  }
  return `study ${study.name} (${study.architecture})${study.description ? ' — ' + study.description : ''}\n${memberSummary(study)}`;
}

function memberSummary(study: Study): string {
  const lines: string[] = [];
  const vars = designVariables(study);
  const architecture = ARCHITECTURES[study.architecture];
  const actuators = architecture.actuators;
  const geomRows = architecture.parameters.map(({ name, kind: parameterKind }) => {
    const spec = study.geometry[name]!;
    const kind = parameterKind === 'angle' ? 'angle' : 'length';
    if (spec.kind === 'fixed') return [name, 'fixed', formatValue(spec.value, kind), ''];
    if (spec.kind === 'tied') return [name, 'tied', `= ${spec.to}`, ''];
    return [name, 'variable', `${formatValue(spec.min, kind)} … ${formatValue(spec.max, kind)}`, study.baseline[name] !== undefined ? formatValue(study.baseline[name] as number, kind) : '(none)'];
  });
  lines.push('', table(['parameter', 'kind', 'value or bounds', 'baseline'], geomRows));
  lines.push('', `working mode: ${study.workingModes.length > 1 ? 'chosen by the optimizer from ' + study.workingModes.join(', ') : study.workingModes[0]}; assembly mode: ${study.assemblyMode}`);
  if (study.architecture !== 'five-bar') {
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
  }
  lines.push(`design variables: ${vars.length} (${vars.map((v) => v.name).join(', ') || 'none'})`);
  const g = study.gravity;
  lines.push(`gravity in the plane: (${g[0]}, ${g[1]}) m/s²; payload ${formatValue(study.payloadMass, 'mass')}; links: cranks ${study.links.cranks[0].label}; rods ${study.links.rods[0].label}`);
  if (study.drives) {
    study.drives.forEach((d, i) =>
      lines.push(
        d.linear
          ? `drive ${i + 1}: ${d.label}: linear, rated ${formatValue(d.linear.ratedEffort, 'force')}, peak ${formatValue(d.linear.peakEffort, 'force')}, max ${formatValue(d.linear.maxSpeed, 'speed')} (at the slider)`
          : `drive ${i + 1}: ${d.label}: ratio ${d.gearRatio}, η ${d.efficiency}, rated ${formatValue(d.ratedTorque, 'torque')}, peak ${formatValue(d.peakTorque, 'torque')}, max ${formatValue(d.maxSpeed, 'angularSpeed')} (motor side)${d.lead !== undefined ? `, lead ${formatValue(d.lead, 'length')} per turn` : ''}`,
      ),
    );
  } else if (study.driveChoice.kind !== 'fixed') {
    lines.push(`drives: chosen by the optimizer (${study.driveChoice.kind === 'shared' ? 'one option for both actuators' : 'one option per actuator'}) from ${study.driveChoice.options.map((o) => o.label).join(', ')}`);
  } else {
    lines.push('drives: none given (acceleration capability and resolution are not computed; no drive limits)');
  }
  if (study.driveCatalogue) lines.push(`drive catalogue: ${study.driveCatalogue.path} (${study.driveCatalogue.options.length} options)`);
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
  const e = study.evaluation;
  lines.push(`evaluation: ${e.gridCells} grid cells, ${e.taskSamples} task samples, 1/κ ≥ ${e.minInverseCondition}, transmission angle ≥ ${formatValue(e.minTransmissionAngle, 'angle')}`);
  lines.push('', table(['objective', 'sense', 'meaning'], study.objectives.map((o) => [o.metric, o.sense, metricInfo(o.metric)!.description])));
  const cons = constraintDefinitions(study);
  if (cons.length > 0) {
    const drives = study.drives;
    const bound = (c: (typeof cons)[number], side: 'min' | 'max'): string => {
      if (c.driveLimit && !drives) return side === 'max' ? 'per drive' : '—';
      return formatMetric(c.metric, constraintBounds(c, study, drives)[side], actuators);
    };
    lines.push('', table(['constraint', 'metric', 'min', 'max', 'from'], cons.map((c) => [c.name, c.metric, bound(c, 'min'), bound(c, 'max'), c.origin])));
  }
  const t = study.optimizer.termination;
  const stop = t.kind === 'generations' ? `${t.generations} generations (fixed)` : `until the front improves by less than ${t.tolerance * 100} % over ${t.window} generations, at most ${t.maxEvaluations} evaluations`;
  lines.push('', `optimizer: population ${study.optimizer.population}, seed ${study.optimizer.seed}; runs ${stop}`);
  return lines.join('\n');
}

/** Says how many task points a design cannot assemble, and where (they give the worst-limit values). */
function unassembledText(f: TaskPointFailures): string {
  const where = f.failed.slice(0, 6).map((p) => `(${formatValue(p.x, 'length')}, ${formatValue(p.y, 'length')}) ${p.status}`).join('; ');
  return (
    `${f.failed.length} of ${f.checked} task points cannot be assembled: ${where}${f.failed.length > 6 ? '; …' : ''}.\n` +
    'At those points the per-pose metrics take their worst limits (∞ torques and speeds, zero stiffness, frequency and acceleration) and constraint margins read about −1e6: ' +
    'the design does not cover its task region there. Probe one with: loopsmith probe STUDY --at X,Y'
  );
}

/** Whether the study's baseline meets its constraints, as a line for `check` (and its JSON). */
function baselineVerdict(study: Study): { feasible: boolean | null; failing: string[]; text: string } {
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

function parsePoint(text: string): [number, number, number | undefined] {
  const parts = text.split(',');
  if (parts.length !== 2 && parts.length !== 3) throw new UserError(`--at ${text}: expected X,Y (or X,Y,PHI for a 3-DOF platform), for example --at 0,-450mm or --at "0 mm,-450 mm,10 deg"`);
  const phi = parts.length === 3 ? parseQuantity(parts[2]!.trim(), 'angle', '--at PHI') : undefined;
  return [parseQuantity(parts[0]!.trim(), 'length', '--at X'), parseQuantity(parts[1]!.trim(), 'length', '--at Y'), phi];
}

function asStrings(value: unknown): string[] {
  if (value === undefined) return [];
  return (Array.isArray(value) ? value : [value]).map(String);
}

export function buildCli(argv: readonly string[]): Argv {
  let cli = yargs([...argv])
    .scriptName('loopsmith')
    .usage('$0 <command> [options]\n\nChooses link lengths of planar parallel robots. Results are early-design estimates, not a safety analysis.')
    .command(
      'new <file>',
      'write a commented study template',
      (y) =>
        y
          .positional('file', { type: 'string', demandOption: true, describe: 'study file to write (YAML)' })
          .option('force', { type: 'boolean', default: false, describe: 'overwrite an existing file' })
          .example('$0 new studies/my-arm.yaml', 'a commented template to edit, then check'),
      (args) => {
        if (existsSync(args.file) && !args.force) throw new UserError(`${args.file} exists; use --force to overwrite`);
        writeFileSync(args.file, STUDY_TEMPLATE.replace('https://loopsmith.invalid/schema/study.schema.json', schemaPath()));
        out(`wrote ${args.file}; edit it, then run: ${programName()} check ${args.file}`);
      },
    )
    .command(
      'check <study>',
      'validate a study file and summarise it',
      (y) =>
        y
          .positional('study', { type: 'string', demandOption: true, describe: 'study file (YAML)' })
          .option('json', { type: 'boolean', default: false, describe: 'print the parsed study (SI units) as JSON' })
          .example('$0 check studies/parcel-sorter.yaml', 'validate the demo study and summarise it'),
      (args) => {
        const loaded = loadStudyFile(args.study);
        const problems = unreachableTaskProblems(loaded.study);
        if (problems.length > 0) throw new StudyError(`${args.study}: the study cannot succeed:\n  - ${problems.join('\n  - ')}`);
        const mirror = mirrorLimitWarning(loaded.study);
        if (mirror) warn(mirror.message);
        const baseline = baselineVerdict(loaded.study);
        if (args.json) {
          out(toJson({ ok: true, study: loaded.study, fileHash: loaded.fileHash, settingsHash: loaded.settingsHash, designVariables: designVariables(loaded.study), constraints: constraintDefinitions(loaded.study), baseline, warnings: mirror ? [mirror.message] : [] }));
        } else {
          out(`${args.study}: valid\n\n${studySummary(loaded.study)}\n\n${baseline.text}`);
        }
      },
    )
    .command(
      'evaluate <study>',
      'evaluate the baseline design (with overrides): every metric and constraint',
      (y) =>
        y
          .positional('study', { type: 'string', demandOption: true })
          .option('set', { type: 'string', array: true, describe: 'override NAME=VALUE (e.g. crank_1=320mm, working_mode=+-); a bare number is metres or radians' })
          .option('json', { type: 'boolean', default: false, describe: 'print the report as JSON (SI units, stable keys)' })
          .example('$0 evaluate studies/parcel-sorter.yaml --set crank_1=250mm --set rod_1=480mm', 'the baseline with two lengths changed'),
      (args) => {
        const loaded = loadStudyFile(args.study);
        checkOverrides(loaded.study, asStrings(args.set));
        const { report, warnings } = evaluateDesign(loaded.study, asStrings(args.set));
        warnings.forEach(warn);
        const unassembled = taskPointFailures(loaded.study, asStrings(args.set));
        if (args.json) {
          out(toJson({ ...report, taskPoints: { checked: unassembled.checked, failed: unassembled.failed.length, points: unassembled.failed } }));
          return;
        }
        const study = loaded.study;
        const design = Object.entries(report.design).map(([k, v]) => `${k} ${typeof v === 'number' ? formatValue(v, variableKind(study, k)) : v}`).join(', ');
        const actuators = studyActuators(study, report.design);
        const lines = [`${report.study} — design: ${design || '(no design variables)'}`, ''];
        lines.push(table(['metric', 'value', 'meaning'], METRICS.map((m) => [m.name, formatMetric(m.name, report.metrics[m.name], actuators), m.description])));
        if (report.constraints.length > 0) {
          const shown = report.constraints.filter((c) => !Number.isNaN(c.margin));
          lines.push('', table(['constraint', 'value', 'min', 'max', 'margin', 'ok'], shown.map((c) => [c.name, formatMetric(c.metric, c.value, actuators), formatMetric(c.metric, c.min, actuators), formatMetric(c.metric, c.max, actuators), c.margin.toFixed(3), c.satisfied ? 'yes' : 'NO'])));
        }
        lines.push('', report.feasible ? 'feasible: every constraint holds' : `NOT feasible: total normalised violation ${report.violation.toPrecision(3)}`);
        if (unassembled.failed.length > 0) lines.push('', unassembledText(unassembled));
        out(lines.join('\n'));
      },
    )
    .command(
      'probe <study>',
      'everything at one end-point position of one design',
      (y) =>
        y
          .positional('study', { type: 'string', demandOption: true })
          .option('at', { type: 'string', demandOption: true, describe: 'end point X,Y, or X,Y,PHI for a 3-DOF platform (units allowed, e.g. 0,-450mm or 0,0.1,10deg)' })
          .option('set', { type: 'string', array: true, describe: 'override NAME=VALUE (e.g. crank_1=320mm)' })
          .option('json', { type: 'boolean', default: false, describe: 'print the report as JSON (SI units)' })
          .example('$0 probe studies/parcel-sorter.yaml --at -200mm,-525mm', 'joint angles, Jacobian, torques and stiffness at one point'),
      (args) => {
        const loaded = loadStudyFile(args.study);
        checkOverrides(loaded.study, asStrings(args.set));
        checkPointText(loaded.study, args.at);
        const [x, y, phi] = parsePoint(args.at);
        if (loaded.study.members || loaded.study.architecture !== 'five-bar') {
          const { report: r, warnings: w } = probeArchitectureDesign(loaded.study, x, y, phi, asStrings(args.set));
          w.forEach(warn);
          out(args.json ? toJson(r) : formatArchitectureProbe(r));
          return;
        }
        if (phi !== undefined) throw new UserError(`--at ${args.at}: the ${loaded.study.architecture} is 2-DOF; give X,Y`);
        const { report, warnings } = probeDesign(loaded.study, x, y, asStrings(args.set));
        warnings.forEach(warn);
        if (args.json) {
          out(toJson(report));
          return;
        }
        const rows: string[][] = [['status', report.status]];
        const deg = (r: number): string => formatValue(r, 'angle');
        const mat = (m: [[number, number], [number, number]], digits = 4): string => `[${m[0].map((v) => v.toPrecision(digits)).join(' ')}; ${m[1].map((v) => v.toPrecision(digits)).join(' ')}]`;
        if (report.jointAngles) rows.push(['joint angles θ1, θ2', `${deg(report.jointAngles[0])}, ${deg(report.jointAngles[1])}`]);
        if (report.elbows) rows.push(['elbows C1, C2 (mm)', report.elbows.map((c) => `(${(c[0] * 1000).toFixed(1)}, ${(c[1] * 1000).toFixed(1)})`).join(', ')]);
        if (report.jacobian) rows.push(['J (m/rad)', mat(report.jacobian)]);
        if (report.inverseCondition !== undefined) rows.push(['1/κ(J)', report.inverseCondition.toFixed(4)]);
        if (report.detA !== undefined) rows.push(['det A', report.detA.toFixed(4)]);
        if (report.transmissionAngles) rows.push(['transmission angles leg1, leg2, rods', `${deg(report.transmissionAngles.leg1)}, ${deg(report.transmissionAngles.leg2)}, ${deg(report.transmissionAngles.rods)}`]);
        if (report.gravityTorque) rows.push(['gravity torque τ_g (N·m)', report.gravityTorque.map((v) => v.toPrecision(4)).join(', ')]);
        if (report.inertia) rows.push(['D (kg·m²)', mat(report.inertia)]);
        if (report.cartesianMass) rows.push(['M_x (kg)', mat(report.cartesianMass)]);
        if (report.cartesianStiffness) rows.push(['K_x (N/m)', mat(report.cartesianStiffness)]);
        if (report.minStiffness !== undefined) rows.push(['min stiffness', formatValue(report.minStiffness, 'linearStiffness')]);
        if (report.naturalFrequencies) rows.push(['natural frequencies', report.naturalFrequencies.map((f) => formatValue(f, 'frequency')).join(', ')]);
        if (report.accelCapability !== undefined) rows.push(['acceleration capability', formatValue(report.accelCapability, 'acceleration')]);
        if (report.requiredJointSpeeds !== undefined) rows.push(['joint speeds for the required speed', report.requiredJointSpeeds ? report.requiredJointSpeeds.map((s) => formatValue(s, 'angularSpeed')).join(', ') : '— (no task speed)']);
        rows.push(...builtArmRows(report.builtArm));
        out(`probe at (${formatValue(x, 'length')}, ${formatValue(y, 'length')})\n\n${table(['quantity', 'value'], rows)}`);
      },
    );
  cli = registerStoreCommands(cli);
  cli = registerReportCommands(cli);
  cli = registerExportCommands(cli);
  cli = registerSimulateCommands(cli);
  cli = registerScaleCommands(cli);
  cli = registerAccuracyCommands(cli);
  return cli
    .demandCommand(1, 'give a command; see loopsmith --help')
    .strict()
    .help()
    .version(loopsmithVersion()) // loopsmith's own package.json, not the one in the working directory
    .fail((message, error) => {
      // Errors thrown by option checks (coerce) come as YError: they are command-line mistakes.
      if (error instanceof UsageError) throw error;
      if (error && error.name !== 'YError') throw error;
      throw new UsageError(message ?? error?.message ?? 'bad command line');
    });
}

/** Plain-text probe of any architecture: arrays per actuator with their units. */
function formatArchitectureProbe(report: ReturnType<typeof probeArchitectureDesign>['report']): string {
  const rows: string[][] = [['architecture', report.architecture], ['status', report.status]];
  const num = (v: number): string => v.toPrecision(4);
  const mat = (m: number[][]): string => `[${m.map((r) => r.map(num).join(' ')).join('; ')}]`;
  const units = report.actuatorUnits ?? [];
  const withUnits = (values: number[], key: 'position' | 'speed' | 'effort'): string =>
    values.map((v, i) => (units[i]?.[key] === 'rad' ? formatValue(v, 'angle') : `${num(v)} ${units[i]?.[key] ?? ''}`)).join(', ');
  if (report.jointPositions) rows.push(['joint positions q', withUnits(report.jointPositions, 'position')]);
  if (report.proximalJoints) rows.push(['proximal joints (mm)', report.proximalJoints.map((c) => `(${(c[0] * 1000).toFixed(1)}, ${(c[1] * 1000).toFixed(1)})`).join(', ')]);
  if (report.distalJoints) rows.push(['distal joints (mm)', report.distalJoints.map((c) => `(${(c[0] * 1000).toFixed(1)}, ${(c[1] * 1000).toFixed(1)})`).join(', ')]);
  if (report.jacobian) rows.push(['J', mat(report.jacobian)]);
  if (report.homogenisedJacobian && report.point.phi !== undefined) rows.push([`J_h (L = ${formatValue(report.characteristicLength ?? 1, 'length')})`, mat(report.homogenisedJacobian)]);
  if (report.inverseCondition !== undefined) rows.push(['1/κ(J_h)', report.inverseCondition.toFixed(4)]);
  if (report.mechanismSine !== undefined) rows.push(['mechanism sine', report.mechanismSine.toFixed(4)]);
  if (report.legSines) rows.push(['leg sines s_i', report.legSines.map((v) => v.toFixed(4)).join(', ')]);
  if (report.usableMargin !== undefined) rows.push(['usable margin', report.usableMargin.toFixed(4)]);
  if (report.orientationRanges) rows.push(['usable orientation ranges', report.orientationRanges.map(([a, b]) => `${formatValue(a, 'angle')} … ${formatValue(b, 'angle')}`).join('; ') || 'none']);
  if (report.gravityEfforts) rows.push(['gravity efforts τ_g', withUnits(report.gravityEfforts, 'effort')]);
  if (report.inertia) rows.push(['D', mat(report.inertia)]);
  if (report.cartesianMass) rows.push(['M_x', mat(report.cartesianMass)]);
  if (report.cartesianStiffness) rows.push(['K_x', mat(report.cartesianStiffness)]);
  if (report.minStiffness !== undefined) rows.push(['min translational stiffness', formatValue(report.minStiffness, 'linearStiffness')]);
  if (report.rotationalStiffness) rows.push(['rotational stiffness', formatValue(report.rotationalStiffness, 'rotationalStiffness')]);
  if (report.naturalFrequencies) rows.push(['natural frequencies', report.naturalFrequencies.map((f) => formatValue(f, 'frequency')).join(', ')]);
  if (report.accelCapability !== undefined) rows.push(['acceleration capability', formatValue(report.accelCapability, 'acceleration')]);
  if (report.requiredJointSpeeds !== undefined) rows.push(['joint speeds for the required speed', report.requiredJointSpeeds ? withUnits(report.requiredJointSpeeds, 'speed') : '— (no task speed)']);
  rows.push(...builtArmRows(report.builtArm));
  const at = `(${formatValue(report.point.x, 'length')}, ${formatValue(report.point.y, 'length')}${report.point.phi !== undefined ? `, ${formatValue(report.point.phi, 'angle')}` : ''})`;
  return `probe at ${at}\n\n${table(['quantity', 'value'], rows)}`;
}

/** File-system failures a user can cause (a folder that does not exist or is not writable, a full disk). */
const FILE_ERROR_TEXT: Readonly<Record<string, string>> = {
  EACCES: 'permission denied',
  EPERM: 'operation not permitted',
  EROFS: 'the file system is read-only',
  ENOENT: 'no such file or folder',
  ENOTDIR: 'a part of the path is not a folder',
  EISDIR: 'it is a folder, not a file',
  ENOSPC: 'no space left on the device',
  EEXIST: 'it exists already',
  ENAMETOOLONG: 'the name is too long',
};

/** One line for a file-system error, or undefined when it is not one. */
export function fileErrorMessage(error: unknown): string | undefined {
  const e = error as NodeJS.ErrnoException;
  if (!(error instanceof Error) || typeof e.code !== 'string' || !(e.code in FILE_ERROR_TEXT)) return undefined;
  const path = e.path ?? (e as { dest?: string }).dest;
  const verb = e.syscall === 'open' || e.syscall === 'mkdir' || e.syscall === 'rename' || e.syscall === 'write' ? 'cannot write' : 'cannot use';
  return `${path ? `${verb} ${path}` : 'file error'}: ${FILE_ERROR_TEXT[e.code]} (${e.code}); choose another path or fix its permissions`;
}

let pipeGuardInstalled = false;

/** A reader that stops early (`| head`) closes the pipe: end quietly, as command-line tools do. */
function installPipeGuard(): void {
  if (pipeGuardInstalled) return;
  pipeGuardInstalled = true;
  const quietOnBrokenPipe = (error: NodeJS.ErrnoException): void => {
    if (error.code === 'EPIPE' || error.code === 'ERR_STREAM_DESTROYED') process.exit(process.exitCode === undefined ? 0 : Number(process.exitCode));
    throw error;
  };
  process.stdout.on('error', quietOnBrokenPipe);
}

export interface MainOptions {
  /** Exit quietly when stdout is closed early (the command line does; tests that run main in-process do not). */
  readonly pipeGuard?: boolean;
}

export async function main(argv: readonly string[], options: MainOptions = {}): Promise<number> {
  if (options.pipeGuard !== false) installPipeGuard();
  const before = process.exitCode;
  try {
    process.exitCode = undefined;
    setInvocationArguments(argv);
    await buildCli(joinNegativeValues(argv)).parseAsync();
    return process.exitCode === undefined ? 0 : Number(process.exitCode);
  } catch (error) {
    if (error instanceof UsageError) {
      process.stderr.write(`loopsmith: ${error.message}\nsee: ${programName()} --help\n`);
      return 2;
    }
    if (isUserError(error)) {
      process.stderr.write(`loopsmith: ${error.message}\n`);
      return 1;
    }
    const fileMessage = fileErrorMessage(error);
    if (fileMessage !== undefined) {
      process.stderr.write(`loopsmith: ${fileMessage}\n`);
      return 1;
    }
    throw error;
  } finally {
    if (options.pipeGuard === false) process.exitCode = before;
  }
}
