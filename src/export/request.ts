/**
 * What an export request is made of, apart from the exporters themselves: the formats and the user
 * error. The command line reads these when it starts; the exporters (which draw maps, and so load the
 * chart libraries) only when it exports.
 */
import { LoopsmithUserError } from '../core/errors.js';

export type ExportFormat = 'json' | 'csv' | 'mjcf';
export const EXPORT_FORMATS: readonly ExportFormat[] = ['json', 'csv', 'mjcf'];

/** A problem with an export request that the user can fix (unknown ids, empty selection, ...). */
export class ExportError extends LoopsmithUserError {
  override readonly name = 'ExportError';
}
