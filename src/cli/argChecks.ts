/**
 * Command-line checks that catch the usual slips before anything is evaluated or written: a bare
 * number that is almost surely millimetres read as metres, a negative size, negative coordinates
 * that the option parser would take for options.
 */
import { ARCHITECTURES } from '../architectures/index.js';
import { LoopsmithUserError } from '../core/errors.js';
import { designVariables } from '../mechanics/designSpace.js';
import type { Study } from '../study/types.js';
import { formatValue } from './format.js';

/** An error whose message is for the user as it stands (exit code 1). */
export class UserError extends LoopsmithUserError {
  constructor(message: string) {
    super(message);
    this.name = 'UserError';
  }
}

/** A malformed command line (exit code 2). */
export class UsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'UsageError';
  }
}

const BARE_NUMBER = /^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/;
/** Options that take no value: a negative number after them is not theirs. */
const FLAG_OPTIONS = new Set(['--json', '--quiet', '--force', '--front', '--friction', '--no-friction', '--help', '--version', '--all-columns']);

/**
 * `--at -200mm,-525mm` would be read as the unknown options -2, -0, ...: a value that starts with a
 * minus sign and a digit is joined to the option before it (`--at=-200mm,-525mm`).
 */
export function joinNegativeValues(argv: readonly string[]): string[] {
  const out: string[] = [];
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i]!;
    const next = argv[i + 1];
    if (arg.startsWith('--') && !arg.includes('=') && !FLAG_OPTIONS.has(arg) && next !== undefined && /^-(\d|\.\d)/.test(next)) {
      out.push(`${arg}=${next}`);
      i++;
    } else {
      out.push(arg);
    }
  }
  return out;
}

/** Largest length the study's geometry allows: the sum of every length's upper bound (an outer reach). */
export function studyLengthScale(study: Study): number {
  const geometries = study.members ? study.members.map((m) => ({ geometry: m.geometry, architecture: m.architecture })) : [{ geometry: study.geometry, architecture: study.architecture }];
  let scale = 0;
  for (const { geometry, architecture } of geometries) {
    let sum = 0;
    for (const p of ARCHITECTURES[architecture].parameters) {
      if (p.kind === 'angle') continue;
      const spec = geometry[p.name];
      if (!spec) continue;
      if (spec.kind === 'fixed') sum += Math.abs(spec.value);
      else if (spec.kind === 'variable') sum += Math.max(Math.abs(spec.min), Math.abs(spec.max));
    }
    scale = Math.max(scale, sum);
  }
  return scale > 0 ? scale : 1;
}

/** Bounds of a length override: the variable's bounds, or a fixed parameter's value. */
function overrideRange(study: Study, name: string): { min: number; max: number; kind: 'length' | 'angle'; signed: boolean } | undefined {
  const variable = designVariables(study).find((v) => v.name === name);
  if (study.members) {
    if (variable?.kind !== 'real') return undefined;
    return { min: variable.min, max: variable.max, kind: 'length', signed: variable.min < 0 };
  }
  const info = ARCHITECTURES[study.architecture].parameters.find((p) => p.name === name);
  const spec = study.geometry[name];
  if (!info || !spec) return undefined;
  const kind = info.kind === 'angle' ? 'angle' : 'length';
  const signed = kind === 'angle' || name === 'base_rise' || name === 'rail_height';
  if (spec.kind === 'variable') return { min: spec.min, max: spec.max, kind, signed };
  if (spec.kind === 'fixed') return { min: spec.value, max: spec.value, kind, signed };
  return undefined;
}

/**
 * Refuses `--set` values that are almost surely slips: a negative size (`crank_1=-300mm`), and a
 * bare number far outside the plausible range of a length (`crank_1=300`, read as 300 m). A plausible
 * bare number stays allowed (metres, radians).
 */
export function checkOverrides(study: Study, overrides: readonly string[]): void {
  const scale = studyLengthScale(study);
  for (const raw of overrides) {
    const eq = raw.indexOf('=');
    if (eq <= 0) continue; // the API names the expected NAME=VALUE form
    const name = raw.slice(0, eq).trim();
    const text = raw.slice(eq + 1).trim();
    const range = overrideRange(study, name);
    if (!range || range.kind !== 'length') continue;
    const bare = BARE_NUMBER.test(text);
    const leadingMinus = text.startsWith('-');
    if (leadingMinus && !range.signed) {
      throw new UserError(`--set ${raw}: ${name} is a length and cannot be negative; give a positive value with a unit, for example --set ${name}=${formatValue(Math.max(range.max, 0), 'length').replace(' ', '')}`);
    }
    if (!bare) continue;
    const value = Math.abs(Number(text));
    const limit = Math.max(10 * Math.max(Math.abs(range.min), Math.abs(range.max)), scale);
    if (value > limit) {
      const hint = value / 1000 <= limit ? `did you mean ${text}mm? ` : '';
      throw new UserError(
        `--set ${raw}: ${text} without a unit is ${text} m, far outside ${name}'s range ${formatValue(range.min, 'length')} … ${formatValue(range.max, 'length')}; ${hint}give the unit, for example --set ${name}=${text}mm`,
      );
    }
  }
}

/**
 * Refuses an `--at` coordinate given as a bare number that lies far outside anything the study's
 * geometry can reach (`--at 100,-450mm`: x read as 100 m).
 */
export function checkPointText(study: Study, text: string): void {
  const scale = studyLengthScale(study);
  const parts = text.split(',').slice(0, 2);
  parts.forEach((part, i) => {
    const item = part.trim();
    if (!BARE_NUMBER.test(item)) return;
    const value = Math.abs(Number(item));
    if (value > 2 * scale) {
      const axis = i === 0 ? 'X' : 'Y';
      const hint = value / 1000 <= 2 * scale ? `did you mean ${item}mm? ` : '';
      throw new UserError(
        `--at ${text}: ${axis} = ${item} without a unit is ${item} m, far beyond the study's reach (about ${formatValue(scale, 'length')}); ${hint}give units, for example --at 0mm,-450mm`,
      );
    }
  });
}

/** A positive integer option; anything else is a malformed command line. */
export function positiveInteger(name: string, minimum = 1) {
  return (value: unknown): number | undefined => {
    if (value === undefined) return undefined;
    const n = Number(value);
    if (!Number.isInteger(n) || n < minimum) throw new UsageError(`--${name} ${String(value)}: expected a whole number ${minimum > 1 ? `of at least ${minimum}` : 'of at least 1'}`);
    return n;
  };
}

/** An integer option (a seed): anything else is a malformed command line. */
export function integerOption(name: string) {
  return (value: unknown): number | undefined => {
    if (value === undefined) return undefined;
    const n = typeof value === 'number' ? value : Number(String(value).trim());
    if (!Number.isSafeInteger(n) || String(value).trim() === '') throw new UsageError(`--${name} ${String(value)}: expected a whole number, for example --${name} 7`);
    return n;
  };
}
