/**
 * Argument checks at the boundary of the programmatic API (src/index.ts). Each public function
 * states its arguments as rules; a wrong argument ends in one ApiArgumentError naming the function,
 * the argument (and option field), what was expected and what was given.
 */
import { LoopsmithUserError } from '../core/errors.js';
import type { LoadedStudy } from '../study/parse.js';
import type { Study } from '../study/types.js';

/** A programmatic call with an argument of the wrong kind or shape (a user error, like a bad study file). */
export class ApiArgumentError extends LoopsmithUserError {}

/** Where below the argument a value failed, what it should have been, and an optional hint. */
export interface ArgumentProblem {
  readonly path: string;
  readonly expected: string;
  readonly value: unknown;
  readonly hint?: string;
}

/** What a value must be, in words, and the test that finds the first problem (undefined: acceptable). */
export interface ArgumentRule {
  readonly expected: string;
  readonly problem: (value: unknown) => ArgumentProblem | undefined;
}

type PlainObject = Record<string, unknown>;

function isPlainObject(value: unknown): value is PlainObject {
  if (typeof value !== 'object' || value === null || Array.isArray(value)) return false;
  const proto = Object.getPrototypeOf(value) as unknown;
  return proto === Object.prototype || proto === null;
}

/** A parsed study (what `loadStudyFile(path).study` is). */
export function isStudy(value: unknown): value is Study {
  return (
    isPlainObject(value) &&
    typeof value['name'] === 'string' &&
    typeof value['architecture'] === 'string' &&
    isPlainObject(value['geometry']) &&
    Array.isArray(value['objectives'])
  );
}

/** What `loadStudyFile` and `parseStudyText` return. */
export function isLoadedStudy(value: unknown): value is LoadedStudy {
  return isPlainObject(value) && isStudy(value['study']) && typeof value['text'] === 'string' && typeof value['settingsHash'] === 'string';
}

/** A short description of a value for messages. */
export function describeValue(value: unknown): string {
  if (value === undefined || value === null) return String(value);
  if (typeof value === 'string') return `the string ${JSON.stringify(value.length > 60 ? value.slice(0, 57) + '...' : value)}`;
  if (typeof value === 'function') return 'a function';
  if (typeof value !== 'object') return `the ${typeof value} ${String(value)}`;
  if (ArrayBuffer.isView(value)) return `a ${value.constructor.name} of length ${(value as unknown as ArrayLike<unknown>).length ?? value.byteLength}`;
  if (Array.isArray(value)) return `an array of ${value.length} item${value.length === 1 ? '' : 's'}`;
  if (isLoadedStudy(value)) return 'a loaded study (what loadStudyFile returns)';
  if (isStudy(value)) return 'a study (the .study of what loadStudyFile returns)';
  if (!isPlainObject(value)) return `a ${value.constructor?.name ?? 'object'}`;
  const keys = Object.keys(value);
  if (keys.length === 0) return 'an empty object';
  return `an object with ${keys.length === 1 ? 'key' : 'keys'} ${keys.slice(0, 6).join(', ')}${keys.length > 6 ? ', ...' : ''}`;
}

function rule(expected: string, test: (value: unknown) => boolean, hint?: (value: unknown) => string | undefined): ArgumentRule {
  return {
    expected,
    problem: (value) => {
      if (test(value)) return undefined;
      const text = hint?.(value);
      return text === undefined ? { path: '', expected, value } : { path: '', expected, value, hint: text };
    },
  };
}

const isFiniteNumber = (v: unknown): v is number => typeof v === 'number' && Number.isFinite(v);

/** A study in either shape: the loaded file or its `.study`. */
const STUDY_RULE = rule('a study: what loadStudyFile(path) or parseStudyText(text) returns, or its .study', (v) => isStudy(v) || isLoadedStudy(v));

/** Field rules of an options object: one per field of T, so a new option cannot be left unchecked. */
export type OptionRules<T> = { readonly [K in keyof Required<T>]-?: ArgumentRule };

/** The rules the public API uses. */
export const is = {
  /** A non-empty string; `what` says what it names, e.g. "path of the SQLite database". */
  text: (what: string): ArgumentRule => rule(`a non-empty string (${what})`, (v) => typeof v === 'string' && v.length > 0),
  number: (what: string): ArgumentRule => rule(`a finite number (${what})`, isFiniteNumber),
  integer: (min: number, what: string): ArgumentRule => rule(`an integer ≥ ${min} (${what})`, (v) => Number.isInteger(v) && (v as number) >= min),
  boolean: rule('true or false', (v) => typeof v === 'boolean'),
  function: rule('a function', (v) => typeof v === 'function'),
  oneOf: (values: readonly string[]): ArgumentRule => rule(`one of ${values.map((v) => JSON.stringify(v)).join(', ')}`, (v) => typeof v === 'string' && values.includes(v)),
  optional: (inner: ArgumentRule): ArgumentRule => ({
    expected: `${inner.expected}, or left out`,
    problem: (v) => {
      const p = v === undefined ? undefined : inner.problem(v);
      return p && p.path === '' ? { ...p, expected: `${p.expected}, or left out` } : p;
    },
  }),
  arrayOf: (inner: ArgumentRule, what: string): ArgumentRule => ({
    expected: `an array of ${what}`,
    problem: (v) => {
      if (!Array.isArray(v)) return { path: '', expected: `an array of ${what}`, value: v };
      for (let i = 0; i < v.length; i++) {
        const p = inner.problem(v[i]);
        if (p) return { ...p, path: `[${i}]${p.path}` };
      }
      return undefined;
    },
  }),
  /** An options object: known fields only, each checked by its rule. */
  options: <T>(fields: OptionRules<T>): ArgumentRule => {
    const rules = fields as Readonly<Record<string, ArgumentRule>>;
    const expected = `an options object (fields ${Object.keys(rules).join(', ')})`;
    return {
      expected,
      problem: (v) => {
        if (!isPlainObject(v)) return { path: '', expected, value: v };
        for (const key of Object.keys(v)) {
          if (!(key in rules)) return { path: '', expected, value: v, hint: `"${key}" is not one of its fields` };
        }
        for (const [key, fieldRule] of Object.entries(rules)) {
          const p = fieldRule.problem(v[key]);
          if (p) return { ...p, path: `.${key}${p.path}` };
        }
        return undefined;
      },
    };
  },
  study: STUDY_RULE,
  /** A loaded study only (runs need the study's text for the workers and the store). */
  loadedStudy: rule('a loaded study: what loadStudyFile(path) or parseStudyText(text) returns', isLoadedStudy, (v) =>
    isStudy(v) ? 'this function needs the whole loaded study (it stores the study text), not its .study' : undefined,
  ),
  /** Design overrides: ["NAME=VALUE", ...] as on the command line, or { NAME: VALUE } (numbers in SI). */
  overrides: rule(
    'design overrides: an array of "NAME=VALUE" strings (e.g. ["crank_1=250mm"]) or an object { NAME: VALUE } (numbers in SI units, or strings with a unit)',
    (v) =>
      (Array.isArray(v) && v.every((s) => typeof s === 'string')) ||
      (isPlainObject(v) && Object.values(v).every((s) => typeof s === 'string' || isFiniteNumber(s))),
  ),
  /** A design vector: numbers in the order of the study's design variables. */
  design: (length: number, names: readonly string[]): ArgumentRule =>
    rule(
      `a Float64Array or array of ${length} numbers in the order of the design variables (${names.join(', ') || 'none'}), SI units`,
      (v) => (Array.isArray(v) || v instanceof Float64Array) && v.length === length && Array.prototype.every.call(v, (x: unknown) => typeof x === 'number'),
    ),
} as const;

/**
 * Checks a call's arguments, in order: `{ name: [value, rule] }`. Throws an ApiArgumentError such
 * as `runFront: dbPath must be a non-empty string (path of the SQLite database); got undefined`.
 */
export function checkArguments(fn: string, args: Readonly<Record<string, readonly [unknown, ArgumentRule]>>): void {
  for (const [name, [value, argumentRule]] of Object.entries(args)) {
    const p = argumentRule.problem(value);
    if (!p) continue;
    throw new ApiArgumentError(`${fn}: ${name}${p.path} must be ${p.expected}; got ${describeValue(p.value)}${p.hint ? ` (${p.hint})` : ''}`);
  }
}

/** The study of an argument in either shape (checked). */
export function studyArgument(fn: string, value: Study | LoadedStudy): Study {
  checkArguments(fn, { study: [value, is.study] });
  return isLoadedStudy(value) ? value.study : (value as Study);
}

/** Overrides as the engine takes them ("NAME=VALUE" strings), from either accepted shape (checked). */
export function overridesArgument(fn: string, value: DesignOverrides | undefined): string[] {
  if (value === undefined) return [];
  checkArguments(fn, { overrides: [value, is.overrides] });
  if (Array.isArray(value)) return [...(value as readonly string[])];
  return Object.entries(value).map(([name, v]) => `${name}=${v}`);
}

/** Design overrides accepted by the public API. */
export type DesignOverrides = readonly string[] | Readonly<Record<string, number | string>>;
