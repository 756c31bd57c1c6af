import { candidateExport } from '../../src/export/sheet.js';
import { candidateSchemaErrors } from '../../src/export/export.js';
import { sheetToJson } from '../../src/export/sheet.js';
export { candidateExport };
export function candidateSchemaErrorsFor(sheet: object) {
  return candidateSchemaErrors(JSON.parse(sheetToJson(sheet)));
}
