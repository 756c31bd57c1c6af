/**
 * `loopsmith sensitivity`: does the choice survive a change of assumptions? The front designs of a
 * run are rescored (src/run/rescore.ts, designs: 'front') under each study assumption changed by
 * minus and plus a fraction (payload, a stiffness, a threshold, a motor rating: any number in the
 * study file, named by its path), and for each change the report says which representatives of the
 * original front (src/run/frontTools.ts) stay non-dominated among the rescored front designs, which
 * are now dominated and which became infeasible. Each rescore is stored as a run linked to the
 * original one, like `loopsmith rescore`.
 */
import { parseAllDocuments } from 'yaml';
import type { PoolOptions } from '../pool/pool.js';
import { Store } from '../store/store.js';
import { parseStudyText } from '../study/parse.js';
import { runFront } from './front.js';
import { analyseFront } from './frontTools.js';
import { RescoreError, rescoreRun } from './rescore.js';

/** Short names for common assumptions; any other dotted path into the study file works too. */
export const ASSUMPTION_ALIASES: Readonly<Record<string, string>> = {
  payload: 'mass.payload',
  joint_stiffness: 'drives.both.joint_stiffness',
  rated_torque: 'drives.both.rated_torque',
  peak_torque: 'drives.both.peak_torque',
  min_inverse_condition: 'evaluation.min_inverse_condition',
};

export interface Variation {
  /** As given (alias or path). */
  readonly name: string;
  /** Dotted path into the study file, list items by index (constraints.1.min). */
  readonly path: string;
  /** Relative change, e.g. 0.2 for ±20 %. */
  readonly fraction: number;
}

export interface SensitivityCase {
  readonly name: string;
  readonly path: string;
  /** Signed relative change applied (−0.2, +0.2). */
  readonly change: number;
  readonly from: string;
  readonly to: string;
  readonly rescoreRunId: number;
  /** Non-dominated designs among the rescored front designs. */
  readonly frontSize: number;
  readonly representatives: readonly { id: number; status: 'non-dominated' | 'dominated' | 'infeasible' }[];
}

export interface SensitivityResult {
  readonly runId: number;
  readonly frontSize: number;
  readonly representatives: readonly { id: number; reasons: readonly string[] }[];
  readonly cases: readonly SensitivityCase[];
  /** Representatives non-dominated under every change. */
  readonly robust: readonly number[];
}

/** "payload=20%" or "mass.payload=±20%" → a variation. */
export function parseVariation(text: string): Variation {
  const match = /^\s*([A-Za-z_][\w.]*)\s*=\s*(?:±|\+-|\+\/-)?\s*(\d+(?:\.\d+)?)\s*%\s*$/.exec(text);
  if (!match) throw new RescoreError(`--vary "${text}": write NAME=±PERCENT, e.g. --vary payload=20% or --vary drives.both.joint_stiffness=30%`);
  const name = match[1]!;
  const fraction = Number(match[2]) / 100;
  if (!(fraction > 0 && fraction < 1)) throw new RescoreError(`--vary "${text}": the change must be between 0 % and 100 %`);
  return { name, path: ASSUMPTION_ALIASES[name] ?? name, fraction };
}

/** Multiplies the number at `path` of the study's first YAML document by `factor`; a quantity keeps its unit. */
export function scaleAssumption(text: string, path: string, factor: number): { text: string; from: string; to: string } {
  const docs = parseAllDocuments(text);
  const list = Array.isArray(docs) ? docs : [docs];
  const doc = list[0]!;
  const keys = path.split('.').map((k) => (/^\d+$/.test(k) ? Number(k) : k));
  const value: unknown = doc.getIn(keys);
  let scaled: number | string;
  if (typeof value === 'number') scaled = Number((value * factor).toPrecision(12));
  else if (typeof value === 'string' && /^\s*[-+]?\d/.test(value)) {
    const m = /^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)(.*)$/.exec(value)!;
    scaled = `${Number((Number(m[1]) * factor).toPrecision(12))}${m[2]}`;
  } else {
    throw new RescoreError(`--vary ${path}: the study has no number or quantity there (found ${value === undefined ? 'nothing' : JSON.stringify(value)}); name a value such as mass.payload or drives.both.joint_stiffness`);
  }
  doc.setIn(keys, scaled);
  return { text: list.map((d) => d.toString()).join('---\n'), from: String(value), to: String(scaled) };
}

export interface SensitivityOptions extends PoolOptions {
  readonly dbPath: string;
  readonly runId?: number;
  readonly variations: readonly Variation[];
  /** Representatives asked for (default 4, as the report). */
  readonly representatives?: number;
  readonly onCase?: (done: number, total: number) => void;
}

export async function sensitivity(options: SensitivityOptions): Promise<SensitivityResult> {
  if (options.variations.length === 0) throw new RescoreError('sensitivity: give at least one --vary NAME=±PERCENT');
  const front = runFront(options.dbPath, options.runId);
  if (front.designs.length === 0) throw new RescoreError(`${options.dbPath}: run ${front.runId} has no feasible front to test`);
  const analysis = analyseFront(front, options.representatives ?? 4);
  const identity = (values: Readonly<Record<string, number | string>>): string => JSON.stringify(Object.keys(values).sort().map((k) => [k, values[k]]));
  const repIdentity = new Map(analysis.representatives.map((r) => [r.id, identity(front.designs.find((d) => d.id === r.id)!.variables)]));
  const store = Store.open(options.dbPath);
  const studyText = store.getStudy(store.getRun(front.runId)!.studyId)!.fileText;
  store.close();

  const cases: SensitivityCase[] = [];
  const total = options.variations.length * 2;
  for (const variation of options.variations) {
    for (const sign of [-1, 1]) {
      const change = sign * variation.fraction;
      const changed = scaleAssumption(studyText, variation.path, 1 + change);
      const loaded = parseStudyText(changed.text, `study of run ${front.runId} with ${variation.path} ${change > 0 ? '+' : ''}${(100 * change).toFixed(0)} %`);
      const rescored = await rescoreRun(loaded, { ...options, dbPath: options.dbPath, runId: front.runId, designs: 'front' });
      const onFront = new Set(rescored.front.map((e) => identity(e.variables)));
      const check = Store.open(options.dbPath);
      const feasibleNow = new Map(check.generationMembers(rescored.runId, 0).map((m) => [identity(m.variables), m.feasible && m.error === null]));
      check.close();
      cases.push({
        name: variation.name,
        path: variation.path,
        change,
        from: changed.from,
        to: changed.to,
        rescoreRunId: rescored.runId,
        frontSize: rescored.front.length,
        representatives: analysis.representatives.map((r) => {
          const key = repIdentity.get(r.id)!;
          return { id: r.id, status: onFront.has(key) ? 'non-dominated' : feasibleNow.get(key) === false ? 'infeasible' : 'dominated' };
        }),
      });
      options.onCase?.(cases.length, total);
    }
  }
  const robust = analysis.representatives.map((r) => r.id).filter((id) => cases.every((c) => c.representatives.find((x) => x.id === id)!.status === 'non-dominated'));
  return { runId: front.runId, frontSize: front.designs.length, representatives: analysis.representatives.map((r) => ({ id: r.id, reasons: r.reasons })), cases, robust };
}
