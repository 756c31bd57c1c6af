/**
 * The `tolerances` command (first-order accuracy against a Monte Carlo of the exact closed loop at
 * one pose) and the built-arm rows `probe` adds (docs/accuracy.md). Logic lives in src/api/accuracy.ts.
 */
import type { Argv } from 'yargs';
import { loadStudyFile } from '../study/parse.js';
import { parseQuantity } from '../study/units.js';
import { toleranceScatter, type ToleranceScatterReport } from '../api/accuracy.js';
import type { BuiltArmPoseReport } from '../mechanics/builtArmDesign.js';
import { formatValue, table, toJson } from './format.js';
import { checkOverrides, checkPointText, integerOption, positiveInteger, UsageError } from './argChecks.js';

const out = (text: string): void => {
  process.stdout.write(text.endsWith('\n') ? text : text + '\n');
};

function asStrings(value: unknown): string[] {
  if (value === undefined) return [];
  return (Array.isArray(value) ? value : [value]).map(String);
}

function point(text: string): [number, number, number | undefined] {
  const parts = text.split(',');
  if (parts.length !== 2 && parts.length !== 3) throw new UsageError(`--at ${text}: expected X,Y (or X,Y,PHI for a 3-DOF platform), for example --at 0,-350mm`);
  const phi = parts.length === 3 ? parseQuantity(parts[2]!.trim(), 'angle', '--at PHI') : undefined;
  return [parseQuantity(parts[0]!.trim(), 'length', '--at X'), parseQuantity(parts[1]!.trim(), 'length', '--at Y'), phi];
}

/** Rows of the built-arm figures for a probe table (none when the study has no accuracy sections). */
export function builtArmRows(r: BuiltArmPoseReport | undefined): string[][] {
  if (!r) return [];
  const rows: string[][] = [];
  const len = (v: number): string => formatValue(v, 'length');
  if (r.positionErrorWorst !== null) rows.push(['position error, worst case (first order)', len(r.positionErrorWorst)]);
  if (r.errorEllipse) {
    const e = r.errorEllipse;
    rows.push([`error ellipse at ${r.coverage}σ (semi-axes, major axis angle)`, `${len(e.major)} × ${len(e.minor)}, ${formatValue(e.angle, 'angle')}`]);
  }
  if (r.orientationErrorWorst !== null) rows.push(['orientation error, worst case / at coverage', `${formatValue(r.orientationErrorWorst, 'angle')} / ${formatValue(r.orientationErrorRss, 'angle')}`]);
  if (r.outOfPlaneMode !== null) rows.push(['out-of-plane mode', formatValue(r.outOfPlaneMode, 'frequency')]);
  rows.push(['leg axial forces (peak, with end load)', r.legs.map((l) => formatValue(l.axialForce, 'force')).join(', ')]);
  rows.push(['link bending moments', r.legs.map((l) => formatValue(l.bendingMoment, 'torque')).join(', ')]);
  rows.push(['pin forces', r.legs.map((l) => formatValue(l.pinForce, 'force')).join(', ')]);
  if (r.legs.every((l) => l.stress !== null)) rows.push(['largest link stress per leg (MPa)', r.legs.map((l) => (l.stress! / 1e6).toPrecision(4)).join(', ')]);
  if (r.legs.every((l) => l.eulerRatio !== null)) rows.push(['Euler load / compression per leg', r.legs.map((l) => (Number.isFinite(l.eulerRatio!) ? l.eulerRatio!.toPrecision(4) : 'not compressed')).join(', ')]);
  return rows;
}

function scatterText(r: ToleranceScatterReport): string {
  const len = (v: number): string => formatValue(v, 'length');
  const f = r.firstOrder;
  const m = r.monteCarlo;
  const k = f.coverage ?? 3;
  const rows: string[][] = [
    ['samples (closed / asked)', `${m.samples - m.failed} / ${m.samples}`],
    ['worst case |δP|: first order vs Monte Carlo maximum', `${len(f.positionErrorWorst!)} vs ${len(m.positionMax)} (ratio ${r.worstRatio.toFixed(3)}, ≥ 1 expected)`],
    [`${k}σ along the worst direction: first order vs Monte Carlo`, `${len(f.positionErrorRss!)} vs ${len(m.positionAtCoverage)} (ratio ${r.rssRatio.toFixed(3)})`],
    ['Monte Carlo 95th percentile of |δP|', len(m.positionP95)],
    ['Monte Carlo mean error (x, y)', `${len(m.mean[0])}, ${len(m.mean[1])}`],
  ];
  if (f.errorEllipse) rows.push([`first-order error ellipse at ${k}σ`, `${len(f.errorEllipse.major)} × ${len(f.errorEllipse.minor)}, ${formatValue(f.errorEllipse.angle, 'angle')}`]);
  if (f.orientationErrorWorst !== null) {
    rows.push(['orientation worst case: first order vs Monte Carlo maximum', `${formatValue(f.orientationErrorWorst, 'angle')} vs ${formatValue(m.orientationMax, 'angle')}`]);
    rows.push([`orientation ${k}σ: first order vs Monte Carlo`, `${formatValue(f.orientationErrorRss, 'angle')} vs ${formatValue(m.orientationAtCoverage, 'angle')}`]);
  }
  const at = `(${len(r.point.x)}, ${len(r.point.y)}${r.point.phi !== undefined ? `, ${formatValue(r.point.phi, 'angle')}` : ''})`;
  return `tolerance check at ${at} — early-design estimate, not a safety analysis\n\n${table(['quantity', 'value'], rows)}`;
}

export function registerAccuracyCommands(cli: Argv): Argv {
  return cli.command(
    'tolerances <study>',
    'first-order accuracy under the study tolerances at one pose, checked by a Monte Carlo of perturbed arms closed exactly',
    (y) =>
      y
        .positional('study', { type: 'string', demandOption: true })
        .option('at', { type: 'string', demandOption: true, describe: 'end point X,Y, or X,Y,PHI for a 3-DOF platform (units allowed, e.g. 0,-350mm)' })
        .option('samples', { type: 'number', default: 2000, coerce: positiveInteger('samples', 10), describe: 'number of perturbed arms (count)' })
        .option('seed', { type: 'number', default: 1, coerce: integerOption('seed'), describe: 'random seed (same seed, same numbers)' })
        .option('set', { type: 'string', array: true, describe: 'override NAME=VALUE (e.g. crank_1=320mm)' })
        .option('json', { type: 'boolean', default: false, describe: 'print the report as JSON (SI units: m, rad)' })
        .example('$0 tolerances studies/bench-press-accuracy.yaml --at 0,-350mm --samples 4000', 'worst-case and 3σ error at the task centre, first order against 4000 perturbed arms'),
    (args) => {
      const loaded = loadStudyFile(args.study);
      checkOverrides(loaded.study, asStrings(args.set));
      checkPointText(loaded.study, args.at);
      const [x, y, phi] = point(args.at);
      const report = toleranceScatter(loaded.study, x, y, phi, asStrings(args.set), { samples: args.samples as number, seed: args.seed as number });
      out(args.json ? toJson(report) : scatterText(report));
    },
  );
}
