/**
 * One registry of names: the study schema's name lists that code also holds are written from the
 * code's catalogues (src/study/schemaNames.ts, scripts/schema-names.mjs) or checked against them here.
 * A failure in the first test means: run `npm run schema:names` and commit the schema.
 *
 * Sources: derived here (the schema file and the catalogues must list the same names); the
 * studies used are invented scenarios (studies/parcel-sorter-drivetrains.yaml).
 */
import { describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { METRIC_NAMES } from '../../src/core/metrics.js';
import { MOTION_LAWS } from '../../src/core/cycle.js';
import { ARCHITECTURES } from '../../src/architectures/index.js';
import { MOUNT_VARIABLES } from '../../src/cell/types.js';
import { loadStudyFile, MATERIALS, StudyError, studySchemaForRegistry } from '../../src/study/parse.js';
import { candidateMetricDrift, schemaNameDrift, studyMetricNames, writeCandidateMetrics, writeSchemaNames } from '../../src/study/schemaNames.js';

const ROOT = join(import.meta.dirname, '..', '..');
const SCHEMA_FILE = join(ROOT, 'src', 'study', 'study.schema.json');
const SCHEMA_TEXT = readFileSync(SCHEMA_FILE, 'utf8');
type Schema = { definitions: Record<string, any>; properties: Record<string, any> };
const SCHEMA = JSON.parse(SCHEMA_TEXT) as Schema;

describe('the shipped study schema lists the catalogue metrics', () => {
  it('definitions.metric.enum is the catalogue (METRIC_NAMES, in order, then former names still read)', () => {
    expect(schemaNameDrift(SCHEMA)).toEqual([]);
    const listed = SCHEMA.definitions['metric'].enum as string[];
    expect(listed.slice(0, METRIC_NAMES.length)).toEqual([...METRIC_NAMES]);
    expect(listed).toEqual([...studyMetricNames()]);
    // the parser validates against the catalogue itself, whatever the file says
    expect((studySchemaForRegistry() as unknown as Schema).definitions['metric'].enum).toEqual([...studyMetricNames()]);
    // the drive-train metrics that once were missing (derived here: they are in METRIC_NAMES)
    for (const name of ['inertia_ratio', 'drive_rms_use', 'drive_peak_use_2', 'gearbox_estop_use', 'brake_use', 'drive_cost', 'accel_capability_at_speed', 'cycle_rms_torque_3']) {
      expect(listed).toContain(name);
    }
  });

  it('negative control: a schema with a name removed or added is reported, and the writer puts it back', () => {
    const missing = structuredClone(SCHEMA);
    missing.definitions['metric'].enum = (missing.definitions['metric'].enum as string[]).filter((n) => n !== 'inertia_ratio');
    expect(schemaNameDrift(missing)).toEqual(['definitions.metric.enum: missing inertia_ratio']);
    const extra = structuredClone(SCHEMA);
    extra.definitions['metric'].enum = [...(extra.definitions['metric'].enum as string[]), 'no_such_metric'];
    expect(schemaNameDrift(extra)).toEqual(['definitions.metric.enum: not in the catalogue no_such_metric']);
    const swapped = structuredClone(SCHEMA);
    const list = swapped.definitions['metric'].enum as string[];
    [list[0], list[1]] = [list[1]!, list[0]!];
    expect(schemaNameDrift(swapped)).toEqual(['definitions.metric.enum: order differs from the catalogue']);

    const stale = SCHEMA_TEXT.replace('        "drive_rms_use",\n', '');
    expect(stale).not.toBe(SCHEMA_TEXT);
    expect(schemaNameDrift(JSON.parse(stale))).not.toEqual([]);
    expect(writeSchemaNames(stale)).toBe(SCHEMA_TEXT);
    // rewriting an up-to-date schema changes nothing, byte for byte
    expect(writeSchemaNames(SCHEMA_TEXT)).toBe(SCHEMA_TEXT);
  });

  it('a study may use the drive-train metrics as objectives and constraints; an unknown metric is refused', () => {
    const source = join(ROOT, 'studies', 'parcel-sorter-drivetrains.yaml');
    const text = readFileSync(source, 'utf8')
      .replace('  - { metric: min_cycle_time, sense: min }', '  - { metric: inertia_ratio, sense: min }')
      .replace('  - { metric: cycle_rms_torque, sense: min }', '  - { metric: drive_rms_use, sense: min }')
      .replace('  - { metric: cycle_peak_power, max: 250 W }', '  - { metric: drive_rms_use_1, max: 1 }\n  - { metric: gearbox_estop_use, max: 1 }')
      .replaceAll('catalogues/', `${join(ROOT, 'studies', 'catalogues')}/`);
    const dir = mkdtempSync(join(tmpdir(), 'loopsmith-names-'));
    try {
      writeFileSync(join(dir, 'good.yaml'), text);
      const study = loadStudyFile(join(dir, 'good.yaml')).study;
      expect(study.objectives.map((o) => o.metric)).toEqual(['workspace_area', 'inertia_ratio', 'drive_rms_use']);
      expect(study.constraints.map((c) => c.metric)).toContain('gearbox_estop_use');
      writeFileSync(join(dir, 'bad.yaml'), text.replace('{ metric: inertia_ratio, sense: min }', '{ metric: inertia_ration, sense: min }'));
      expect(() => loadStudyFile(join(dir, 'bad.yaml'))).toThrow(StudyError);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});

describe('the candidate-sheet schema lists the catalogue metrics', () => {
  const file = join(ROOT, 'src', 'export', 'candidate.schema.json');
  const text = readFileSync(file, 'utf8');
  it('both sheets require and describe every metric of METRIC_NAMES, in order', () => {
    expect(candidateMetricDrift(JSON.parse(text))).toEqual([]);
    expect(writeCandidateMetrics(text)).toBe(text);
  });
  it('negative control: a sheet missing a metric is reported, and the writer puts it back', () => {
    const stale = text.replace('            "inertia_ratio_2",\n', '');
    expect(stale).not.toBe(text);
    const drift = candidateMetricDrift(JSON.parse(stale));
    expect(drift.some((d) => d.includes('.required: missing inertia_ratio_2'))).toBe(true);
    expect(writeCandidateMetrics(stale)).toBe(text);
  });
});

describe('the schema\'s other name lists agree with the code', () => {
  it('materials: definitions.material enum = MATERIALS', () => {
    expect(SCHEMA.definitions['material'].oneOf[0].enum).toEqual(Object.keys(MATERIALS));
  });

  it('five-bar geometry: the schema branch names the registry parameters (base_rise optional)', () => {
    const branch = SCHEMA.definitions['fiveBarGeometry'];
    const registry = ARCHITECTURES['five-bar'].parameters.map((p) => p.name);
    expect(Object.keys(branch.properties)).toEqual(registry);
    expect(branch.required).toEqual(registry.filter((n) => n !== 'base_rise'));
  });

  it('motion laws: the schema lists the file-level laws, a subset of MOTION_LAWS (constant-speed is API only, docs/duty-cycle.md)', () => {
    const laws = SCHEMA.definitions['motionLaw'].enum as string[];
    expect(laws).toEqual(MOTION_LAWS.filter((l) => l !== 'constant-speed'));
  });

  it('cell mounting: the schema names the mounting variables of src/cell/types.ts', () => {
    expect(Object.keys(SCHEMA.definitions['cell'].properties.mounting.properties)).toEqual([...MOUNT_VARIABLES]);
  });
});
