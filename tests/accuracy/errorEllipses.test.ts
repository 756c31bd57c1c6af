/**
 * The error-ellipse map layer (src/report/errorEllipses.ts) on the invented demo study: each drawn
 * ellipse is the first-order k σ ellipse at its lattice point, magnified by the factor in the label.
 */
import { describe, expect, it } from 'vitest';
import { fileURLToPath } from 'node:url';
import { loadStudyFile, parseStudyText } from '../../src/study/parse.js';
import { chooseDesign } from '../../src/api/design.js';
import { designMapSpec } from '../../src/report/designMap.js';
import { Evaluator } from '../../src/mechanics/evaluate.js';
import { builtArmAtPose } from '../../src/mechanics/builtArmDesign.js';

const STUDY = fileURLToPath(new URL('../../studies/bench-press-accuracy.yaml', import.meta.url));

type Row = { x: number; y: number; part: string; order: number };

describe('error ellipses on the workspace map', () => {
  it('draws the k σ ellipse of every lattice point, magnified by the stated factor (derived: points at t = 0 and π/2 lie on the semi-axes)', () => {
    const study = loadStudyFile(STUDY).study;
    const choice = chooseDesign(study, []);
    const map = designMapSpec(choice.study, choice.design, { cells: 60 });
    const layers = (map.spec as { layer: { name?: string; data?: { values: Row[] } }[] }).layer;
    const layer = layers.find((l) => l.name === 'error-ellipses');
    expect(layer).toBeDefined();
    const subtitle = (map.spec as { title: { subtitle: string[] } }).title.subtitle;
    const note = subtitle.find((s) => s.startsWith('error ellipses'))!;
    const magnification = Number(/drawn ×([\d.e+-]+)/.exec(note)![1]);
    const rows = layer!.data!.values;
    const parts = [...new Set(rows.map((r) => r.part))];
    expect(parts.length).toBe(25); // every point of the 5 × 5 lattice is assembled for this design
    const d = new Evaluator(choice.study).architectureDesign(choice.design);
    const pose = d.architecture.createPose();
    for (const part of parts.slice(0, 5)) {
      const ring = rows.filter((r) => r.part === part).sort((a, b) => a.order - b.order);
      const cx = (ring[0]!.x + ring[24]!.x) / 2 / 1000; // t = 0 and t = π are opposite ends of the major axis
      const cy = (ring[0]!.y + ring[24]!.y) / 2 / 1000;
      d.architecture.solvePose(d.model, pose, cx, cy);
      const r = builtArmAtPose(d.study, d.model, d.resolved, pose)!;
      const major = Math.hypot(ring[0]!.x / 1000 - cx, ring[0]!.y / 1000 - cy);
      const minor = Math.hypot(ring[12]!.x / 1000 - cx, ring[12]!.y / 1000 - cy);
      expect(major / (r.errorEllipse!.major * magnification)).toBeCloseTo(1, 9);
      expect(minor / (r.errorEllipse!.minor * magnification)).toBeCloseTo(1, 9);
    }
  });

  it('negative control: no layer without a tolerances section', () => {
    const text = loadStudyFile(STUDY).text.replace(/^tolerances:\n(  .*\n)+/m, '').replace('  - { metric: position_error_rss, sense: min }\n', '').replace('  - { metric: position_error_worst, max: 0.25 mm }\n', '');
    const study = parseStudyText(text).study;
    const choice = chooseDesign(study, []);
    const map = designMapSpec(choice.study, choice.design, { cells: 60 });
    expect((map.spec as { layer: { name?: string }[] }).layer.some((l) => l.name === 'error-ellipses')).toBe(false);
  });
});
