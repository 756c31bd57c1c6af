/** Commands that draw: map (workspace of one design) and report (HTML study report). */
import { LoopsmithUserError } from '../core/errors.js';
import { accessSync, constants, existsSync, mkdirSync } from 'node:fs';
import { dirname, extname } from 'node:path';
import type { Argv } from 'yargs';
// The chart modules (Vega, Vega-Lite, resvg: about half a second to load) are imported by the
// commands that draw, not by every command the CLI starts with.
import { loadStudyFile } from '../study/parse.js';
import { chooseDesign } from '../api/design.js';
import { checkOverrides, positiveInteger, UsageError } from './argChecks.js';
import { writeFileAtomically } from './files.js';

const out = (text: string): void => {
  process.stdout.write(text.endsWith('\n') ? text : text + '\n');
};

function asStrings(value: unknown): string[] {
  if (value === undefined) return [];
  return (Array.isArray(value) ? value : [value]).map(String);
}

class ReportUsageError extends LoopsmithUserError {}

export function registerReportCommands(cli: Argv): Argv {
  const commands = [registerMapCommand, registerReportCommand];
  return commands.reduce((c, register) => register(c), cli);
}

export function registerMapCommand(cli: Argv): Argv {
  return cli.command(
    'map <study>',
    'draw the workspace of one design (baseline with overrides) to SVG or PNG',
    (y) =>
      y
        .positional('study', { type: 'string', demandOption: true })
        .option('set', { type: 'string', array: true, describe: 'override NAME=VALUE (e.g. crank_1=320mm, working_mode=+-)' })
        .option('out', { type: 'string', demandOption: true, describe: 'output file, .svg or .png' })
        .option('cells', { type: 'number', describe: 'grid cells across the reachable box (default: the study\'s evaluation.grid_cells, at least 120)' })
        .example('$0 map studies/parcel-sorter.yaml --set crank_1=250mm --out results/map.svg', 'the workspace of one design')
        .check((args) => {
          const ext = extname(args.out).toLowerCase();
          if (ext !== '.svg' && ext !== '.png') throw new UsageError(`--out ${args.out}: the file name must end in .svg or .png (for example --out map.svg)`);
          if (args.cells !== undefined && (!Number.isInteger(args.cells) || args.cells < 4 || args.cells > 1000)) throw new UsageError(`--cells ${String(args.cells)}: expected a whole number from 4 to 1000`);
          return true;
        }),
    async (args) => {
      const loaded = loadStudyFile(args.study);
      const overrides = asStrings(args.set);
      checkOverrides(loaded.study, overrides);
      const choice = chooseDesign(loaded.study, overrides);
      choice.warnings.forEach((w) => process.stderr.write(`loopsmith: warning: ${w}\n`));
      // Refuse an unwritable --out before the (long) drawing, not after it.
      mkdirSync(dirname(args.out), { recursive: true });
      accessSync(dirname(args.out), constants.W_OK);
      const cells = args.cells !== undefined ? { cells: args.cells } : {};
      // One map for every architecture (a comparison study: the member the design chooses).
      const [{ designMapSpec }, { renderVegaLiteSvg, svgToPng }] = await Promise.all([import('../report/designMap.js'), import('../report/render.js')]);
      const svg = await renderVegaLiteSvg(designMapSpec(choice.study, choice.design, cells).spec);
      writeFileAtomically(args.out, extname(args.out).toLowerCase() === '.png' ? svgToPng(svg) : svg);
      out(`wrote ${args.out}`);
    },
  );
}

export function registerReportCommand(cli: Argv): Argv {
  return cli.command(
    'report <db>',
    'write a self-contained HTML report of a run (opens offline from disk)',
    (y) =>
      y
        .positional('db', { type: 'string', demandOption: true })
        .option('run', { type: 'number', coerce: positiveInteger('run'), describe: 'run id (default: the latest optimization or sweep)' })
        .option('out', { type: 'string', demandOption: true, describe: 'output folder (index.html is written there)' })
        .example('$0 report results/parcel-sorter.db --out results/parcel-sorter-report', 'an HTML report of the latest finished run'),
    async (args) => {
      if (!existsSync(args.db)) throw new ReportUsageError(`${args.db}: no such database (run a study first: loopsmith run STUDY)`);
      const { writeReport } = await import('../report/report.js');
      const written = await writeReport(args.db, args.run, args.out);
      out(`wrote ${written.htmlPath}\nopen it in a browser (works offline, from disk)`);
    },
  );
}
