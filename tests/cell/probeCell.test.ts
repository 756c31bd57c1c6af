/**
 * `probe` with a cell section: the clearance of the pose over the study's checks (after its required
 * clearance) and the two closest parts. Studies are invented scenarios (studies/cell-conveyor.yaml:
 * conveyor top edge at y = −560 mm, rods 25 mm round tubes, required clearance 5 mm).
 */
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { probeArchitectureDesign, probeDesign } from '../../src/api/design.js';
import { loadStudyFile } from '../../src/study/parse.js';
import { runInProcess } from '../cli/inProcess.js';

const ROOT = join(import.meta.dirname, '..', '..');
const conveyor = loadStudyFile(join(ROOT, 'studies', 'cell-conveyor.yaml')).study;

describe('probe reports the cell checks at the pose', () => {
  it('20 mm above the conveyor: clearance 0.02 − 0.0125 − 0.005 = 2.5 mm, a rod against the conveyor', () => {
    // Derived here: both rods end at P = (−150, −540) mm and rise from it, so P is their point nearest the
    // conveyor's top edge (y = −560 mm); the rod's half-width is 12.5 mm; the study keeps 5 mm clear.
    const { report } = probeDesign(conveyor, -0.15, -0.54);
    expect(report.cell!.minClearance).toBeCloseTo(0.0025, 9);
    expect(report.cell!.closest!.check).toBe('keep-out');
    expect(report.cell!.closest!.between[0]).toMatch(/^rod [12]$/);
    expect(report.cell!.closest!.between[1]).toBe('keep-out "conveyor"');
    expect(report.cell!.passiveJointMargin).not.toBeNull();
  });
  it('10 mm above it: a collision of 0.01 − 0.0125 − 0.005 = −7.5 mm (the same check, lower)', () => {
    const { report } = probeDesign(conveyor, -0.15, -0.55);
    expect(report.cell!.minClearance).toBeCloseTo(-0.0075, 9);
    expect(report.cell!.closest!.between[1]).toBe('keep-out "conveyor"');
  });
  it('the any-architecture probe reports the same; mounting moves the base, not the task frame', () => {
    const { report } = probeArchitectureDesign(conveyor, -0.15, -0.54, undefined, ['mount_y=100mm']);
    expect(report.cell!.minClearance).toBeCloseTo(0.0025, 9);
  });
  it('negative control: a study without a cell section has no cell report', () => {
    const plain = loadStudyFile(join(ROOT, 'studies', 'parcel-sorter.yaml')).study;
    expect(probeDesign(plain, 0, -0.45).report.cell).toBeUndefined();
  });
  it('the command line prints the clearance and the closest pair (needs dist/)', async () => {
    const r = await runInProcess(['probe', join(ROOT, 'studies', 'cell-conveyor.yaml'), '--at', '-150mm,-540mm']);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/min clearance \(negative = collision\)\s+2\.5 mm/);
    expect(r.stdout).toMatch(/closest pair\s+rod [12] – keep-out "conveyor" \(keep-out\)/);
  });
});
