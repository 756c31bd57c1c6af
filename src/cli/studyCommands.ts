/** Commands on one study file: new, check, evaluate, probe. */
import { existsSync, writeFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import type { Argv } from 'yargs';
import { evaluateDesign, probeArchitectureDesign, probeDesign } from '../api/design.js';
import { checkStudy } from '../api/studySummary.js';
import { taskPointFailures, type TaskPointFailures } from '../api/taskPoints.js';
import { studyActuators, variableKind } from '../mechanics/designSpace.js';
import { METRICS } from '../mechanics/metrics.js';
import { loadStudyFile } from '../study/parse.js';
import { STUDY_TEMPLATE } from '../study/template.js';
import { parseQuantity } from '../study/units.js';
import { formatMetric, formatValue, table, toJson } from './format.js';
import { checkOverrides, checkPointText, UserError } from './argChecks.js';
import { programName } from './invocation.js';
import { builtArmRows } from './accuracyCommands.js';

const out = (text: string): void => {
  process.stdout.write(text.endsWith('\n') ? text : text + '\n');
};
const warn = (text: string): void => {
  process.stderr.write(`loopsmith: warning: ${text}\n`);
};

function schemaPath(): string {
  return fileURLToPath(new URL('../study/study.schema.json', import.meta.url));
}

function asStrings(value: unknown): string[] {
  if (value === undefined) return [];
  return (Array.isArray(value) ? value : [value]).map(String);
}

export function registerStudyCommands(cli: Argv): Argv {
  const commands = [registerNewCommand, registerCheckCommand, registerEvaluateCommand, registerProbeCommand];
  return commands.reduce((c, register) => register(c), cli);
}

export function registerNewCommand(cli: Argv): Argv {
  return cli.command(
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
  );
}

export function registerCheckCommand(cli: Argv): Argv {
  return cli.command(
    'check <study>',
    'validate a study file and summarise it',
    (y) =>
      y
        .positional('study', { type: 'string', demandOption: true, describe: 'study file (YAML)' })
        .option('json', { type: 'boolean', default: false, describe: 'print the parsed study (SI units) as JSON' })
        .example('$0 check studies/parcel-sorter.yaml', 'validate the demo study and summarise it'),
    (args) => {
      const check = checkStudy(loadStudyFile(args.study), args.study);
      check.warnings.forEach(warn);
      out(args.json ? toJson(check.data) : check.text);
    },
  );
}

export function registerEvaluateCommand(cli: Argv): Argv {
  return cli.command(
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
  );
}

export function registerProbeCommand(cli: Argv): Argv {
  return cli.command(
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
      out(args.json ? toJson(report) : formatFiveBarProbe(report, x, y));
    },
  );
}

function parsePoint(text: string): [number, number, number | undefined] {
  const parts = text.split(',');
  if (parts.length !== 2 && parts.length !== 3) throw new UserError(`--at ${text}: expected X,Y (or X,Y,PHI for a 3-DOF platform), for example --at 0,-450mm or --at "0 mm,-450 mm,10 deg"`);
  const phi = parts.length === 3 ? parseQuantity(parts[2]!.trim(), 'angle', '--at PHI') : undefined;
  return [parseQuantity(parts[0]!.trim(), 'length', '--at X'), parseQuantity(parts[1]!.trim(), 'length', '--at Y'), phi];
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

/** Plain-text probe of the five-bar (2 × 2 matrices, crank angles in degrees). */
function formatFiveBarProbe(report: ReturnType<typeof probeDesign>['report'], x: number, y: number): string {
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
  return `probe at (${formatValue(x, 'length')}, ${formatValue(y, 'length')})\n\n${table(['quantity', 'value'], rows)}`;
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
  const at = `(${formatValue(report.point.x, 'length')}, ${formatValue(report.point.y, 'length')}${report.point.phi !== undefined ? `, ${formatValue(report.point.phi, 'angle')}` : ''})`;
  rows.push(...builtArmRows(report.builtArm));
  return `probe at ${at}\n\n${table(['quantity', 'value'], rows)}`;
}

