/**
 * Joint limits given once (`joint_limits.both`) for a mirror-tied arm: `check` warns and names the
 * mirrored range (src/api/plausibility.ts), for the five-bar and the 2-PRR.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { mirrorLimitWarning } from '../../src/api/plausibility.js';
import { parseStudyText } from '../../src/study/parse.js';

const RAIL = readFileSync(new URL('../../studies/rail-sorter-2prr.yaml', import.meta.url), 'utf8');
const STROKES = '  actuator_1: { min: -850 mm, max: -20 mm }\n  actuator_2: { min: 20 mm, max: 850 mm }\n';

function railStudy(limits: string) {
  expect(RAIL.includes(STROKES)).toBe(true);
  return parseStudyText(RAIL.replace(STROKES, limits), '<mirror test>').study;
}

describe('mirrored joint limits', () => {
  it('2-PRR with one stroke for both sliders: warns, and the mirrored stroke of [a, b] is [−b, −a]', () => {
    // Derived here: the rail's origin is x = 0 and the arm mirrors about it, so the mirror of [−850, −20] mm is [20, 850] mm.
    const warning = mirrorLimitWarning(railStudy('  both: { min: -850 mm, max: -20 mm }\n'));
    expect(warning).toBeDefined();
    expect(warning!.mirrored.min).toBeCloseTo(0.02, 12);
    expect(warning!.mirrored.max).toBeCloseTo(0.85, 12);
    expect(warning!.message).toMatch(/rail origin/);
    // The mirrored pair is what the shipped study gives per slider: slider 2 (right of P in mode "-+") can
    // then reach the task at all, so the usable workspace grows from nothing.
    expect(warning!.areaAsGiven).toBe(0);
    expect(warning!.areaMirrored).toBeGreaterThan(0);
  });
  it('negative controls: a symmetric stroke, or strokes given per slider, raise no warning', () => {
    expect(mirrorLimitWarning(railStudy('  both: { min: -850 mm, max: 850 mm }\n'))).toBeUndefined();
    expect(mirrorLimitWarning(parseStudyText(RAIL, '<as shipped>').study)).toBeUndefined();
  });
  it('five-bar with one range for both cranks (the parcel-sorter demo): warns with θ → π − θ', () => {
    const study = parseStudyText(readFileSync(new URL('../../studies/parcel-sorter.yaml', import.meta.url), 'utf8'), '<five-bar>').study;
    const warning = mirrorLimitWarning(study)!;
    // Derived here: [−200°, 100°] mirrors to [180° − 100°, 180° + 200°] = [80°, 380°].
    expect((warning.mirrored.min * 180) / Math.PI).toBeCloseTo(80, 9);
    expect((warning.mirrored.max * 180) / Math.PI).toBeCloseTo(380, 9);
  });
});
