/** The `simulate` command: forward simulation of one design along the study's duty cycle. */
import type { Argv } from 'yargs';
import { loadStudyFile } from '../study/parse.js';
import { parseQuantity, type QuantityKind } from '../study/units.js';
import { CONTROLLER_KINDS, SimulationError, type ControllerKind, type SimulationResult, type SimulationSummary } from '../simulate/simulate.js';
import { prepareStudySimulation, simulateStudyDesign, type StudySimulationSetup } from '../simulate/study.js';
import { formatValue, table, toJson } from './format.js';
import { checkOverrides } from './argChecks.js';
import { variableKind } from '../mechanics/designSpace.js';
import { compareFormulations, driveHooksOf, driveSimulationJson, driveSimulationLines, epsilonList, formulationReportLines } from '../simulate/driveSimulation.js';

const out = (text: string): void => {
  process.stdout.write(text.endsWith('\n') ? text : text + '\n');
};

function asStrings(value: unknown): string[] {
  if (value === undefined) return [];
  return (Array.isArray(value) ? value : [value]).map(String);
}

/** A quantity from the command line: a plain number is taken in SI units. */
function optionQuantity(text: string | undefined, kind: QuantityKind, option: string): number | undefined {
  if (text === undefined) return undefined;
  const trimmed = text.trim();
  const value = /^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/.test(trimmed) ? Number(trimmed) : parseQuantity(trimmed, kind, option);
  return value;
}

/** The JSON written by --json and into summary.json. */
export function simulationJson(setup: StudySimulationSetup, summary: SimulationSummary): Record<string, unknown> {
  return {
    study: setup.study.name,
    design: setup.design,
    cycleTime: setup.cycleTime,
    drives: setup.driveLabels,
    ...summary,
  };
}

function summaryText(setup: StudySimulationSetup, result: SimulationResult): string {
  const s = result.summary;
  const design = Object.entries(setup.design).map(([k, v]) => `${k} ${typeof v === 'number' ? formatValue(v, variableKind(setup.study, k)) : v}`).join(', ');
  const lines = [
    `${setup.study.name} — design: ${design || '(no design variables)'}`,
    `controller: ${s.controller}${s.controller === 'none' ? '' : ` (natural frequency ${s.naturalFrequency} Hz, damping ratio ${s.dampingRatio})`}; simulated ${formatValue(s.duration, 'time')} (cycle ${formatValue(setup.cycleTime, 'time')})${s.extraEndMass > 0 ? `; plant carries ${formatValue(s.extraEndMass, 'mass')} the controller does not know` : ''}`,
    '',
  ];
  const limit = (v: number | null, kind: QuantityKind): string => (v === null ? '—' : formatValue(v, kind));
  const ok = (v: boolean | null): string => (v === null ? '—' : v ? 'yes' : 'NO');
  // Units per joint: N·m, rad/s and mrad for cranks; N, m/s and mm for sliders.
  const rows = s.joints.map((j, i) => {
    const slider = setup.actuators[i] === 'prismatic';
    const effort: QuantityKind = slider ? 'force' : 'torque';
    const speed: QuantityKind = slider ? 'speed' : 'angularSpeed';
    return [
      `joint ${i + 1}`,
      `${(j.maxTrackingError * 1000).toPrecision(3)} ${slider ? 'mm' : 'mrad'}`,
      formatValue(j.peakTorque, effort), limit(j.peakTorqueLimit, effort), ok(j.withinPeakTorque),
      formatValue(j.rmsTorque, effort), limit(j.ratedTorqueLimit, effort), ok(j.withinRatedTorque),
      formatValue(j.peakSpeed, speed), limit(j.speedLimit, speed), ok(j.withinSpeed),
    ];
  });
  lines.push(table(['joint', 'max |e|', 'peak τ', 'limit', 'ok', 'RMS τ', 'rated', 'ok', 'peak speed', 'limit', 'ok'], rows));
  lines.push(
    '',
    `max end-point tracking error: ${formatValue(s.maxEndPointError, 'length')}`,
    `max loop-closure error |Φ|: ${s.maxClosureError.toExponential(2)} m`,
    `energy balance |E − E₀ − ∫(τ − f)·q̇ dt|: ${s.energyResidual.toExponential(2)} J (${s.relativeEnergyResidual.toExponential(2)} of the largest kinetic energy)`,
    `integrator: ${s.integrator.acceptedSteps} steps (${s.integrator.rejectedSteps} rejected), ${s.integrator.evaluations} evaluations over ${s.integrator.segments} smooth stretches`,
  );
  return lines.join('\n');
}

export function registerSimulateCommands(cli: Argv): Argv {
  return cli.command(
    'simulate <study>',
    'forward-simulate one design (baseline with overrides) along the duty cycle under a tracking controller',
    (y) =>
      y
        .positional('study', { type: 'string', demandOption: true })
        .option('set', { type: 'string', array: true, describe: 'override NAME=VALUE (e.g. crank_1=320mm, working_mode=+-)' })
        .option('controller', { type: 'string', choices: [...CONTROLLER_KINDS], default: 'computed-torque', describe: 'tracking controller on the actuated joints' })
        .option('duration', { type: 'string', describe: 'simulated time (default: one cycle), e.g. 2.4s' })
        .option('frequency', { type: 'string', describe: 'closed-loop natural frequency of the tracking error (default 30 Hz)' })
        .option('damping', { type: 'number', describe: 'damping ratio of the tracking error (default 1)' })
        .option('extra-payload', { type: 'string', describe: 'extra end mass the plant carries but the controller does not know (e.g. 0.2kg)' })
        .option('friction', { type: 'boolean', default: true, describe: 'include the study\'s joint friction (--no-friction to leave it out)' })
        .option('interval', { type: 'string', describe: 'spacing of the recorded samples (default 1 ms)' })
        .option('out', { type: 'string', describe: 'folder for the charts (SVG and PNG), timeseries.csv and summary.json' })
        .option('json', { type: 'boolean', default: false, describe: 'print the summary as JSON' })
        .option('formulation', { type: 'string', choices: ['stabilised', 'perturbed'], default: 'stabilised', describe: 'how the loops are held closed: Lagrange multipliers with Baumgarte stabilisation, or the singularly perturbed closure with time constant --epsilon (docs/drives.md)' })
        .option('epsilon', { type: 'string', describe: 'time constant ε of the perturbed closure (default 0.01 s), e.g. 5ms' })
        .option('saturate', { type: 'boolean', default: false, describe: 'clip the drive efforts at the drives\' torque–speed envelopes (the tracking error shows the cost)' })
        .option('compare-epsilon', { type: 'string', describe: 'also run the perturbed closure at these ε (s, comma-separated, e.g. 0.01,0.003,0.001) and report the difference to the stabilised run' })
        .example('$0 simulate studies/parcel-sorter-drivetrains.yaml --formulation perturbed --epsilon 0.01', 'the singularly perturbed closure')
        .example('$0 simulate studies/parcel-sorter-cycle.yaml --extra-payload 0.2kg --out results/sim', 'track the duty cycle with an unmodelled payload'),
    async (args) => {
      const loaded = loadStudyFile(args.study);
      const duration = optionQuantity(args.duration, 'time', '--duration');
      const frequency = optionQuantity(args.frequency, 'frequency', '--frequency');
      const extraEndMass = optionQuantity(args['extra-payload'], 'mass', '--extra-payload');
      const interval = optionQuantity(args.interval, 'time', '--interval');
      if (duration !== undefined && !(duration > 0 && duration <= 3600)) throw new SimulationError('--duration must be positive and at most an hour');
      if (frequency !== undefined && !(frequency > 0)) throw new SimulationError('--frequency must be positive');
      if (args.damping !== undefined && !(args.damping > 0)) throw new SimulationError('--damping must be positive');
      if (extraEndMass !== undefined && !(extraEndMass >= 0)) throw new SimulationError('--extra-payload must be zero or positive');
      if (interval !== undefined && !(interval > 0)) throw new SimulationError('--interval must be positive');
      checkOverrides(loaded.study, asStrings(args.set));
      const epsilon = optionQuantity(args.epsilon, 'time', '--epsilon');
      if (epsilon !== undefined && !(epsilon > 0 && epsilon <= 1)) throw new SimulationError('--epsilon must be positive and at most 1 s');
      const compareList = args['compare-epsilon'] ? epsilonList(args['compare-epsilon']) : null;
      const setup = prepareStudySimulation(loaded.study, asStrings(args.set));
      const hooks = driveHooksOf(setup, args.formulation as 'stabilised' | 'perturbed', epsilon, args.saturate);
      setup.warnings.forEach((w) => process.stderr.write(`loopsmith: warning: ${w}\n`));
      const effectiveDuration = duration ?? setup.cycleTime;
      const effectiveInterval = interval ?? 1e-3;
      if (effectiveDuration / effectiveInterval > 2_000_000) throw new SimulationError('too many samples: lengthen --interval or shorten --duration');
      const result = simulateStudyDesign(setup, {
        controller: args.controller as ControllerKind,
        duration: effectiveDuration,
        outputInterval: effectiveInterval,
        friction: args.friction,
        ...(frequency !== undefined ? { naturalFrequency: frequency } : {}),
        ...(args.damping !== undefined ? { dampingRatio: args.damping } : {}),
        ...(extraEndMass !== undefined ? { extraEndMass } : {}),
        ...hooks,
      });
      const json = toJson({ ...simulationJson(setup, result.summary), ...driveSimulationJson(setup, result, hooks) });
      // The plotting module (Vega, resvg) is loaded only when plots are written.
      const written = args.out ? await (await import('../simulate/plots.js')).writeSimulationOutputs(args.out, result, setup.limits, setup.study.name, json) : [];
      if (args.json) {
        out(json);
        return;
      }
      out([summaryText(setup, result), ...driveSimulationLines(setup, result, hooks)].join('\n'));
      if (compareList) out(formulationReportLines(compareFormulations(setup, { controller: args.controller as ControllerKind, friction: args.friction, ...(frequency !== undefined ? { naturalFrequency: frequency } : {}) }, compareList)).join('\n'));
      if (written.length > 0) out(`\nwrote ${written.length} files to ${args.out}: ${written.map((p) => p.slice(args.out!.length).replace(/^[\\/]/, '')).join(', ')}`);
    },
  );
}
