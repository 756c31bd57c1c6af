/**
 * Drive catalogues: CSV and YAML catalogue files, the drives section of a study that references one
 * (a fixed option, `choose: shared | per-actuator`, `choices`), the stored study bundle, the settings
 * hash, and the drive limits of a design whose drives differ per actuator.
 *
 * Catalogue data, studies and numbers here are INVENTED TEST DATA (tests/fixtures/catalogue/).
 */
import { afterAll, describe, expect, it } from 'vitest';
import { rmSync } from 'node:fs';
import { join } from 'node:path';
import { DesignError, designFromValues, designVariables, resolveDesign } from '../../src/mechanics/designSpace.js';
import { constraintBounds, constraintDefinitions, Evaluator } from '../../src/mechanics/evaluate.js';
import { metricIndex } from '../../src/mechanics/metrics.js';
import { CATALOGUE_FIELDS, parseCsv } from '../../src/study/catalogue.js';
import { loadStudyFile, parseStudyText, StudyError, type LoadedStudy } from '../../src/study/parse.js';
import type { DriveSpec } from '../../src/study/types.js';
import {
  CATALOGUE_CSV,
  CATALOGUE_YAML,
  DRIVE_STUDY,
  fixtureText,
  makeTemporaryDirectory,
  removeTemporaryDirectories,
  replaceOnce,
  writeDriveStudyVariant,
  writeStudy,
} from '../fixtures/catalogue/helpers.js';

afterAll(removeTemporaryDirectories);

const FIXTURE_DRIVES_BLOCK = `drives:
  catalogue: invented-drives.csv
  choose: per-actuator
  choices: [TX-150-G8, "TX-300-G10, quiet", TX-300-G16]
  torque_safety_factor: 1.5
`;
const FIXTURE_BASELINE_DRIVES = `  drive_1: TX-300-G16
  drive_2: TX-150-G8
`;

/**
 * The fixture study with another drives section (YAML lines after "drives:", indented two spaces)
 * and other baseline drive lines, written with the catalogue files into a fresh folder.
 */
function studyWithDrives(drivesLines: string, baselineDriveLines: string, files: Readonly<Record<string, string>>): string {
  let text = fixtureText(DRIVE_STUDY);
  text = replaceOnce(text, FIXTURE_DRIVES_BLOCK, `drives:\n${drivesLines}`);
  text = replaceOnce(text, FIXTURE_BASELINE_DRIVES, baselineDriveLines);
  return writeStudy(makeTemporaryDirectory('catalogue'), text, files);
}

const CSV_FILES = { 'invented-drives.csv': fixtureText(CATALOGUE_CSV) };
const YAML_FILES = { 'invented-drives.yaml': fixtureText(CATALOGUE_YAML) };

/** The StudyError message of loading a study, or a failure when it loads. */
function loadError(path: string): string {
  try {
    loadStudyFile(path);
  } catch (error) {
    expect(error).toBeInstanceOf(StudyError);
    return (error as StudyError).message;
  }
  throw new Error(`expected ${path} to be refused`);
}

/** A study using every option of a catalogue file (shared choice), so that every option is parsed. */
function catalogueStudy(fileName: string, text: string): string {
  return studyWithDrives(`  catalogue: ${fileName}\n  choose: shared\n`, '', { [fileName]: text });
}

const RPM = (2 * Math.PI) / 60; // rad/s per rpm (derived: one revolution is 2π rad, one minute 60 s)

describe('catalogue files: CSV and YAML', () => {
  it('CSV (units in cells, quoted fields, comment and blank lines) and YAML give the same drive options', () => {
    const fromCsv = loadStudyFile(catalogueStudy('invented-drives.csv', fixtureText(CATALOGUE_CSV))).study.driveCatalogue;
    const fromYaml = loadStudyFile(catalogueStudy('invented-drives.yaml', fixtureText(CATALOGUE_YAML))).study.driveCatalogue;
    expect(fromCsv).not.toBeNull();
    expect(fromYaml).not.toBeNull();
    expect(fromCsv!.path).toBe('invented-drives.csv');
    expect(fromYaml!.path).toBe('invented-drives.yaml');
    expect(fromCsv!.options).toStrictEqual(fromYaml!.options);
    // Comment lines and the blank line are skipped; quoted names keep their comma and doubled quotes.
    expect(fromCsv!.options.map((o) => o.label)).toStrictEqual(['TX-150-G8', 'TX-300-G10, quiet', 'TX-300-G16', 'TX-600 "long"']);
  });

  it('converts every field of an option to SI', () => {
    const options = loadStudyFile(catalogueStudy('invented-drives.csv', fixtureText(CATALOGUE_CSV))).study.driveCatalogue!.options;
    const g16 = options.find((o) => o.label === 'TX-300-G16')!;
    // Values of the invented CSV row "TX-300-G16,16,0.84,2.5e-5 kg*m^2,2.0e-5 kg*m^2,0.95 N*m,2.9 N*m,4000 rpm,2.3 kg,3.5e4 N*m/rad,1048576".
    expect(g16.gearRatio).toBe(16);
    expect(g16.efficiency).toBe(0.84);
    expect(g16.rotorInertia).toBe(2.5e-5);
    expect(g16.gearInertia).toBe(2.0e-5);
    expect(g16.ratedTorque).toBe(0.95);
    expect(g16.peakTorque).toBe(2.9);
    expect(g16.maxSpeed).toBeCloseTo(4000 * RPM, 10); // derived: 4000 rpm = 4000 · 2π/60 rad/s ≈ 418.879 rad/s
    expect(g16.mass).toBe(2.3);
    expect(g16.jointStiffness).toBe(3.5e4);
    expect(g16.encoderCounts).toBe(1048576);
  });

  it('reads CRLF line ends like LF', () => {
    const lf = loadStudyFile(catalogueStudy('invented-drives.csv', fixtureText(CATALOGUE_CSV))).study.driveCatalogue!.options;
    const crlf = loadStudyFile(catalogueStudy('invented-drives.csv', fixtureText(CATALOGUE_CSV).replace(/\n/g, '\r\n'))).study.driveCatalogue!.options;
    expect(crlf).toStrictEqual(lf);
  });

  it('parseCsv: quoted commas, doubled quotes and line breaks inside quotes; comment lines only at a line start', () => {
    expect(parseCsv('a,"b, c","say ""hi""","two\nlines"\n# comment\nx,y#not a comment,z,w\n')).toStrictEqual([
      ['a', 'b, c', 'say "hi"', 'two\nlines'],
      ['x', 'y#not a comment', 'z', 'w'],
    ]);
  });

  const header = CATALOGUE_FIELDS.join(',');
  const row = (name: string, overrides: Partial<Record<(typeof CATALOGUE_FIELDS)[number], string>> = {}): string => {
    const base: Record<(typeof CATALOGUE_FIELDS)[number], string> = {
      name, gear_ratio: '10', efficiency: '0.9', rotor_inertia: '2e-5 kg*m^2', gear_inertia: '1e-5 kg*m^2', rated_torque: '0.9 N*m',
      peak_torque: '2.7 N*m', max_speed: '3000 rpm', mass: '1.5 kg', joint_stiffness: '2e4 N*m/rad', encoder_counts: '65536',
    };
    return CATALOGUE_FIELDS.map((f) => overrides[f] ?? base[f]).join(',');
  };
  const csv = (...rows: string[]): string => `# INVENTED TEST DATA\n${header}\n${rows.join('\n')}\n`;

  it('refuses an unknown CSV column, naming the study, the catalogue file and the column', () => {
    const path = catalogueStudy('drives.csv', `${header},colour\n${row('A')},red\n${row('B')},blue\n`);
    const message = loadError(path);
    expect(message).toContain(path);
    expect(message).toContain('drives.csv');
    expect(message).toContain('unknown column "colour"');
  });

  it('refuses an unknown YAML field, naming the study, the catalogue file, the option and the field', () => {
    const yaml = fixtureText(CATALOGUE_YAML).replace('    mass: 1.9 kg\n', '    mass: 1.9 kg\n    colour: red\n');
    const path = catalogueStudy('drives.yaml', yaml);
    const message = loadError(path);
    expect(message).toContain(path);
    expect(message).toContain('drives.yaml');
    expect(message).toContain('option "TX-300-G10, quiet"'); // the second option, named
    expect(message).toContain('unknown field "colour"');
  });

  it.each([
    { what: 'rated_torque', cells: { rated_torque: '' }, expected: /option "B"\.rated_torque: missing value/ },
    { what: 'peak_torque', cells: { peak_torque: '' }, expected: /option "B"\.peak_torque: missing value/ },
    { what: 'max_speed', cells: { max_speed: '' }, expected: /option "B": missing max_speed/ },
    { what: 'gear_ratio', cells: { gear_ratio: '' }, expected: /option "B"\.gear_ratio: must be a positive number/ },
  ])('refuses an option without $what, naming the file and the option', ({ cells, expected }) => {
    const path = catalogueStudy('drives.csv', csv(row('A'), row('B', cells)));
    const message = loadError(path);
    expect(message).toContain(path);
    expect(message).toContain('drives.csv');
    expect(message).toMatch(expected);
  });

  it('refuses an option without a name', () => {
    const message = loadError(catalogueStudy('drives.csv', csv(row('A'), row(''))));
    expect(message).toMatch(/drives\.csv: option 2 has no name/);
  });

  it('refuses a YAML option without max_speed, naming the option', () => {
    const yaml = fixtureText(CATALOGUE_YAML).replace('    max_speed: 4000 rpm\n', '');
    const message = loadError(catalogueStudy('drives.yaml', yaml));
    expect(message).toMatch(/drives\.yaml: option "TX-300-G16": missing max_speed/);
  });

  it('refuses duplicate option names, naming the file and the option', () => {
    const path = catalogueStudy('drives.csv', csv(row('A'), row('B'), row('A', { gear_ratio: '20' })));
    const message = loadError(path);
    expect(message).toContain(path);
    expect(message).toMatch(/drives\.csv: option "A" appears twice/);
  });

  it.each(['1.2', '0', '-0.5', 'high', '85 %'])('refuses efficiency %s, naming the file and the option', (efficiency) => {
    const path = catalogueStudy('drives.csv', csv(row('A'), row('B', { efficiency })));
    const message = loadError(path);
    expect(message).toContain(path);
    expect(message).toMatch(/drives\.csv: option "B"\.efficiency: must be a number in \(0, 1\]/);
  });

  it('accepts efficiency 1 and leaves a missing efficiency at 1', () => {
    const options = loadStudyFile(catalogueStudy('drives.csv', csv(row('A', { efficiency: '1' }), row('B', { efficiency: '' })))).study.driveCatalogue!.options;
    expect(options.map((o) => o.efficiency)).toStrictEqual([1, 1]);
  });

  it('refuses a row with a cell too many, naming the file', () => {
    // The row is counted among header and option rows (comment lines are not counted).
    expect(loadError(catalogueStudy('drives.csv', csv(row('A'), `${row('B')},extra`)))).toMatch(/drives\.csv: row \d+ has 12 cells, the header has 11/);
  });

  it('refuses an unterminated quote, naming the catalogue file', () => {
    expect(loadError(catalogueStudy('drives.csv', csv(row('A'), `"B${row('')}`)))).toMatch(/drives\.csv.*unterminated quoted field/);
  });

  it('refuses a missing catalogue file, naming the study and the path', () => {
    const path = studyWithDrives('  catalogue: nowhere.csv\n  both: A\n', '', {});
    const message = loadError(path);
    expect(message).toContain(path);
    expect(message).toMatch(/drives\.catalogue: cannot read "nowhere\.csv"/);
  });
});

describe('the drives section with a catalogue', () => {
  function option(loaded: LoadedStudy, name: string): DriveSpec {
    const hit = loaded.study.driveCatalogue!.options.find((o) => o.label === name);
    if (!hit) throw new Error(`no option ${name}`);
    return hit;
  }

  it('both: NAME gives both actuators that option, with no drive design variable', () => {
    const loaded = loadStudyFile(studyWithDrives('  catalogue: invented-drives.csv\n  both: TX-300-G16\n', '', CSV_FILES));
    expect(loaded.study.driveChoice).toStrictEqual({ kind: 'fixed' });
    expect(loaded.study.drives).toStrictEqual([option(loaded, 'TX-300-G16'), option(loaded, 'TX-300-G16')]);
    expect(designVariables(loaded.study).map((v) => v.name)).toStrictEqual(['base_span', 'crank_1', 'rod_1']);
    // Its drive limits follow that option (bound derived from the README: η N τ_rated / safety factor).
    const evaluation = new Evaluator(loaded.study).evaluate(Float64Array.of(0.2, 0.3, 0.45));
    const torque1 = constraintDefinitions(loaded.study).findIndex((c) => c.name === 'drive_torque_1');
    expect(evaluation.constraintMax[torque1]).toBeCloseTo((0.84 * 16 * 0.95) / 1.5, 12);
  });

  it('actuator_1 and actuator_2 may name different options', () => {
    const loaded = loadStudyFile(
      studyWithDrives('  catalogue: invented-drives.yaml\n  actuator_1: TX-150-G8\n  actuator_2: "TX-600 \\"long\\""\n', '', YAML_FILES),
    );
    expect(loaded.study.drives).toStrictEqual([option(loaded, 'TX-150-G8'), option(loaded, 'TX-600 "long"')]);
  });

  it('refuses an option name that is not in the catalogue, listing the options', () => {
    const message = loadError(studyWithDrives('  catalogue: invented-drives.csv\n  both: TX-999\n', '', CSV_FILES));
    expect(message).toMatch(/drives\.both: no option "TX-999" in the drive catalogue \(options: TX-150-G8, TX-300-G10, quiet, TX-300-G16, TX-600 "long"\)/);
  });

  it('refuses an option name without a catalogue', () => {
    const message = loadError(studyWithDrives('  both: TX-150-G8\n', '', {}));
    expect(message).toMatch(/drives\.both: "TX-150-G8" names a catalogue option, but drives\.catalogue is not given/);
  });

  it('choose: shared makes one categorical variable "drive" over every option; both actuators get the chosen option', () => {
    const loaded = loadStudyFile(studyWithDrives('  catalogue: invented-drives.csv\n  choose: shared\n', '  drive: TX-300-G16\n', CSV_FILES));
    const variables = designVariables(loaded.study);
    expect(variables.map((v) => v.name)).toStrictEqual(['base_span', 'crank_1', 'rod_1', 'drive']);
    const drive = variables[3]!;
    expect(drive.kind).toBe('categorical');
    expect(drive.kind === 'categorical' ? drive.choices : []).toStrictEqual(['TX-150-G8', 'TX-300-G10, quiet', 'TX-300-G16', 'TX-600 "long"']);
    expect(loaded.study.drives).toBeNull();
    for (const name of ['TX-150-G8', 'TX-300-G10, quiet', 'TX-300-G16', 'TX-600 "long"']) {
      const design = designFromValues(variables, { base_span: 0.2, crank_1: 0.3, rod_1: 0.45, drive: name });
      const resolved = resolveDesign(loaded.study, variables, design);
      expect(resolved.drives).toStrictEqual([option(loaded, name), option(loaded, name)]);
    }
    expect(() => designFromValues(variables, { base_span: 0.2, crank_1: 0.3, rod_1: 0.45, drive_1: 'TX-150-G8', drive_2: 'TX-150-G8' })).toThrow(DesignError);
  });

  it('choose: per-actuator makes "drive_1" and "drive_2"; each actuator gets its own option', () => {
    const loaded = loadStudyFile(DRIVE_STUDY);
    const variables = designVariables(loaded.study);
    expect(variables.map((v) => v.name)).toStrictEqual(['base_span', 'crank_1', 'rod_1', 'drive_1', 'drive_2']);
    const design = designFromValues(variables, { base_span: 0.2, crank_1: 0.3, rod_1: 0.45, drive_1: 'TX-300-G16', drive_2: 'TX-150-G8' });
    expect(resolveDesign(loaded.study, variables, design).drives).toStrictEqual([option(loaded, 'TX-300-G16'), option(loaded, 'TX-150-G8')]);
    expect(loaded.study.baseline).toMatchObject({ drive_1: 'TX-300-G16', drive_2: 'TX-150-G8' });
  });

  it('choices restricts the options, in the order given', () => {
    const loaded = loadStudyFile(DRIVE_STUDY);
    for (const v of designVariables(loaded.study).filter((d) => d.kind === 'categorical')) {
      expect(v.kind === 'categorical' ? v.choices : []).toStrictEqual(['TX-150-G8', 'TX-300-G10, quiet', 'TX-300-G16']);
    }
    expect(() =>
      designFromValues(designVariables(loaded.study), { base_span: 0.2, crank_1: 0.3, rod_1: 0.45, drive_1: 'TX-600 "long"', drive_2: 'TX-150-G8' }),
    ).toThrow(/drive_1: "TX-600 "long"" is not one of/);
    const reordered = loadStudyFile(
      studyWithDrives('  catalogue: invented-drives.csv\n  choose: shared\n  choices: [TX-300-G16, TX-150-G8]\n', '', CSV_FILES),
    );
    const drive = designVariables(reordered.study).find((v) => v.name === 'drive')!;
    expect(drive.kind === 'categorical' ? drive.choices : []).toStrictEqual(['TX-300-G16', 'TX-150-G8']);
  });

  it('refuses a choice that is not in the catalogue, a single choice, choose without a catalogue, and a baseline drive of the wrong kind', () => {
    expect(loadError(studyWithDrives('  catalogue: invented-drives.csv\n  choose: shared\n  choices: [TX-150-G8, TX-7]\n', '', CSV_FILES))).toMatch(
      /drives\.choices: no option "TX-7"/,
    );
    expect(loadError(studyWithDrives('  catalogue: invented-drives.csv\n  choose: shared\n  choices: [TX-150-G8]\n', '', CSV_FILES))).toMatch(
      /drives\.choose: needs at least two options/,
    );
    expect(loadError(studyWithDrives('  choose: shared\n', '', {}))).toMatch(/drives\.choose: needs drives\.catalogue/);
    expect(loadError(studyWithDrives('  catalogue: invented-drives.csv\n  choose: shared\n', '  drive_1: TX-150-G8\n', CSV_FILES))).toMatch(
      /baseline\.drive_1: "drive_1" is not a design variable in this study \(drives\.choose is shared\)/,
    );
    expect(loadError(studyWithDrives(FIXTURE_DRIVES_BLOCK.slice('drives:\n'.length), '  drive_1: TX-600 "long"\n  drive_2: TX-150-G8\n', CSV_FILES))).toMatch(
      /baseline\.drive_1: must be one of the catalogue options/,
    );
  });
});

describe('the stored study bundle and the settings hash', () => {
  it('parseStudyText of the bundle gives the same study and settings hash, even after the catalogue file is deleted', () => {
    const directory = makeTemporaryDirectory('bundle');
    const path = writeDriveStudyVariant(directory);
    const loaded = loadStudyFile(path);
    expect(loaded.text).toContain(fixtureText(DRIVE_STUDY)); // the study document comes first, unchanged
    rmSync(join(directory, 'invented-drives.csv'));
    const again = parseStudyText(loaded.text, 'stored study');
    expect(again.study).toStrictEqual(loaded.study);
    expect(again.settingsHash).toBe(loaded.settingsHash);
    expect(again.fileHash).toBe(loaded.fileHash);
    // The study file itself now fails to load (its catalogue is gone) ...
    expect(loadError(path)).toMatch(/cannot read "invented-drives\.csv"/);
    // ... while the bundle written to a file elsewhere is self-contained.
    const bundlePath = writeStudy(makeTemporaryDirectory('bundle-copy'), loaded.text);
    const fromBundleFile = loadStudyFile(bundlePath);
    expect(fromBundleFile.study).toStrictEqual(loaded.study);
    expect(fromBundleFile.settingsHash).toBe(loaded.settingsHash);
  });

  it('a study without a catalogue is not bundled, and a bundle without its attachment is refused', () => {
    const plain = writeStudy(makeTemporaryDirectory('plain'), replaceOnce(replaceOnce(fixtureText(DRIVE_STUDY), FIXTURE_DRIVES_BLOCK, ''), FIXTURE_BASELINE_DRIVES, ''));
    const loaded = loadStudyFile(plain);
    expect(parseStudyText(loaded.text).settingsHash).toBe(loaded.settingsHash);
    expect(loaded.text).not.toContain('---');
    expect(() => parseStudyText(fixtureText(DRIVE_STUDY), 'unbundled')).toThrow(/unbundled: drives\.catalogue: "invented-drives\.csv" is not attached/);
  });

  it('changing a used option in the catalogue file changes the settings hash; the same content gives the same hash', () => {
    const original = loadStudyFile(writeDriveStudyVariant(makeTemporaryDirectory('hash-a')));
    const same = loadStudyFile(writeDriveStudyVariant(makeTemporaryDirectory('hash-b')));
    expect(same.settingsHash).toBe(original.settingsHash);
    const weaker = loadStudyFile(
      writeDriveStudyVariant(makeTemporaryDirectory('hash-c'), { catalogue: (t) => replaceOnce(t, '"0.95 N*m"', '"0.45 N*m"') }),
    );
    expect(weaker.settingsHash).not.toBe(original.settingsHash);
    expect(weaker.fileHash).not.toBe(original.fileHash);
    const otherStiffness = loadStudyFile(
      writeDriveStudyVariant(makeTemporaryDirectory('hash-d'), { catalogue: (t) => replaceOnce(t, '1.2e4 N*m/rad', '1.3e4 N*m/rad') }),
    );
    expect(otherStiffness.settingsHash).not.toBe(original.settingsHash);
  });
});

describe('drive limits of a design whose drives differ per actuator', () => {
  const loaded = loadStudyFile(DRIVE_STUDY);
  const evaluator = new Evaluator(loaded.study);
  const definitions = constraintDefinitions(loaded.study);
  const index = (name: string): number => {
    const k = definitions.findIndex((c) => c.name === name);
    if (k < 0) throw new Error(`no constraint ${name}`);
    return k;
  };

  // Derived from the README "Drive limits" (drive_torque_i ≤ η N τ_rated / safety factor,
  // drive_speed_i ≤ ω_max / N) with the invented catalogue rows and torque_safety_factor 1.5:
  //   TX-300-G16: 0.84 · 16 · 0.95 N·m / 1.5 = 8.512 N·m;  4000 rpm / 16 = 418.879 rad/s / 16 = 26.17994 rad/s
  //   TX-150-G8:  0.90 ·  8 · 0.48 N·m / 1.5 = 2.304 N·m;  3000 rpm /  8 = 314.159 rad/s /  8 = 39.26991 rad/s
  const G16 = { torque: 8.512, speed: 26.179938779914945 };
  const G8 = { torque: 2.304, speed: 39.269908169872416 };

  it.each([
    { drive_1: 'TX-300-G16', drive_2: 'TX-150-G8', first: G16, second: G8 },
    { drive_1: 'TX-150-G8', drive_2: 'TX-300-G16', first: G8, second: G16 },
  ])('drive_1 $drive_1, drive_2 $drive_2: each actuator has the bounds of its own option', ({ drive_1, drive_2, first, second }) => {
    const design = designFromValues(evaluator.variables, { base_span: 0.2, crank_1: 0.3, rod_1: 0.45, drive_1, drive_2 });
    const evaluation = evaluator.evaluate(design);
    expect(evaluation.constraintMax[index('drive_torque_1')]).toBeCloseTo(first.torque, 12);
    expect(evaluation.constraintMax[index('drive_torque_2')]).toBeCloseTo(second.torque, 12);
    expect(evaluation.constraintMax[index('drive_speed_1')]).toBeCloseTo(first.speed, 10);
    expect(evaluation.constraintMax[index('drive_speed_2')]).toBeCloseTo(second.speed, 10);
    for (const name of ['drive_torque_1', 'drive_torque_2', 'drive_speed_1', 'drive_speed_2']) {
      expect(Number.isNaN(evaluation.constraintMin[index(name)])).toBe(true);
    }
    // Each margin is (bound − value)/bound of its own actuator's metric.
    for (const [name, metric] of [
      ['drive_torque_1', 'peak_gravity_torque_1'],
      ['drive_torque_2', 'peak_gravity_torque_2'],
      ['drive_speed_1', 'peak_joint_speed_1'],
      ['drive_speed_2', 'peak_joint_speed_2'],
    ] as const) {
      const bound = evaluation.constraintMax[index(name)]!;
      const value = evaluation.metrics[metricIndex(metric)]!;
      expect(Number.isFinite(value)).toBe(true);
      expect(evaluation.margins[index(name)]).toBeCloseTo((bound - value) / bound, 12);
    }
    // constraintBounds gives the same bounds from the resolved drives; no drives, no bound.
    const resolved = evaluator.resolve(design);
    expect(constraintBounds(definitions[index('drive_torque_2')]!, loaded.study, resolved.drives)).toStrictEqual({
      max: evaluation.constraintMax[index('drive_torque_2')],
    });
    expect(constraintBounds(definitions[index('drive_torque_2')]!, loaded.study, null)).toStrictEqual({});
  });

  it('the symmetric test design holds the same torque on both joints, so only the weaker drive violates its limit', () => {
    const design = designFromValues(evaluator.variables, { base_span: 0.2, crank_1: 0.3, rod_1: 0.45, drive_1: 'TX-300-G16', drive_2: 'TX-150-G8' });
    const evaluation = evaluator.evaluate(design);
    const torque1 = evaluation.metrics[metricIndex('peak_gravity_torque_1')]!;
    const torque2 = evaluation.metrics[metricIndex('peak_gravity_torque_2')]!;
    expect(torque1).toBeCloseTo(torque2, 9);
    expect(torque1).toBeGreaterThan(G8.torque);
    expect(torque1).toBeLessThan(G16.torque);
    expect(evaluation.margins[index('drive_torque_1')]).toBeGreaterThan(0);
    expect(evaluation.margins[index('drive_torque_2')]).toBeLessThan(0);
    expect(evaluation.feasible).toBe(false);
  });
});
