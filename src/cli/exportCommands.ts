/** Commands that carry designs onward: export (JSON, CSV, MJCF) and rescore. */
import type { Argv } from 'yargs';
import { positiveInteger } from './argChecks.js';
import { ExportError } from '../export/candidate.js';
import { EXPORT_FORMATS, exportCandidates, type ExportFormat } from '../export/export.js';

const out = (text: string): void => {
  process.stdout.write(text.endsWith('\n') ? text : text + '\n');
};

/** "3,5, 8" → [3, 5, 8]; anything else is a user error naming the bad item. */
export function parseIdList(text: string): number[] {
  const items = text.split(',').map((s) => s.trim()).filter((s) => s.length > 0);
  if (items.length === 0) throw new ExportError('--ids: give evaluation ids, for example --ids 12,40,41');
  return items.map((item) => {
    if (!/^\d+$/.test(item) || Number(item) < 1 || !Number.isSafeInteger(Number(item))) {
      throw new ExportError(`--ids: "${item}" is not an evaluation id (positive integers separated by commas)`);
    }
    return Number(item);
  });
}

export function registerExportCommands(cli: Argv): Argv {
  return cli.command(
    'export <db>',
    'write candidate sheets (JSON), one CSV table or MJCF simulation models of stored designs',
    (y) =>
      y
        .positional('db', { type: 'string', demandOption: true })
        .option('front', { type: 'boolean', describe: 'the feasible Pareto front of the run (default: the latest run)' })
        .option('ids', { type: 'string', describe: 'evaluation ids, e.g. 12,40,41' })
        .option('run', { type: 'number', coerce: positiveInteger('run'), describe: 'run whose front (--front) or study and provenance (--ids) to use' })
        .option('format', { choices: EXPORT_FORMATS, demandOption: true, describe: 'json: one sheet per design; csv: one table; mjcf: one MuJoCo model per design' })
        .option('out', { type: 'string', demandOption: true, describe: 'output folder (created when missing)' })
        .conflicts('front', 'ids')
        .example('$0 export results/parcel-sorter.db --front --format csv --out results/front', 'the front as one CSV table')
        .example('$0 export results/parcel-sorter.db --ids 12,40 --format mjcf --out results/mjcf', 'MuJoCo models of two designs'),
    (args) => {
      if (args.front !== true && args.ids === undefined) throw new ExportError('nothing selected: give --front or --ids ID,...');
      const ids = args.ids !== undefined ? parseIdList(args.ids) : undefined;
      // ExportError is a user error for the command line (main.ts): one message, exit code 1.
      const result = exportCandidates(args.db, {
        format: args.format as ExportFormat,
        outDir: args.out,
        ...(args.front === true ? { front: true } : {}),
        ...(ids !== undefined ? { ids } : {}),
        ...(args.run !== undefined ? { runId: args.run } : {}),
      });
      out(
        `exported ${result.sheets.length} candidate${result.sheets.length === 1 ? '' : 's'} (${result.sheets.map((s) => s.id).join(', ')}) as ${args.format}:\n` +
          result.files.map((f) => `  ${f}`).join('\n') +
          '\nEarly-design estimates from simplified models, not a safety analysis.',
      );
    },
  );
}
