/**
 * Exported MJCF models of designs of the parcel-sorter demo study (vertical plane, so gravity loads
 * the drives) against the engine in MuJoCo (npm mujoco-js@0.0.7, a general-purpose multibody engine).
 */
import { afterAll, describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { loadStudyFile } from '../../src/study/parse.js';
import { SimulatedModel } from './mujocoSim.js';
import { checkExportedModel, describeMeasurement, type ModelMeasurement } from './mjcfChecks.js';
import { mjcfOfSheet, sheetFromStudy } from './sheetsFromStudy.js';

const REPO_ROOT = fileURLToPath(new URL('../../', import.meta.url));
const DEMO = loadStudyFile(join(REPO_ROOT, 'studies', 'parcel-sorter.yaml'));

/** The demo baseline and two other designs inside the study's bounds (invented for the test). */
const DESIGNS: readonly { id: number; values: Record<string, number> }[] = [
  { id: 1, values: { base_span: 0.2, crank_1: 0.3, rod_1: 0.45 } },
  { id: 2, values: { base_span: 0.12, crank_1: 0.26, rod_1: 0.5 } },
  { id: 3, values: { base_span: 0.3, crank_1: 0.34, rod_1: 0.42 } },
];

describe('MJCF export of demo-study designs in MuJoCo', () => {
  const measured: ModelMeasurement[] = [];
  afterAll(() => measured.forEach((m) => console.info(describeMeasurement(m))));

  it.each(DESIGNS)('design $id holds still under the engine τ_g and keeps the loop closed for 1 s', async ({ id, values }) => {
    const sheet = sheetFromStudy(DEMO, id, values);
    measured.push(await checkExportedModel(DEMO.study, sheet));
  });

  it('carries the engine body model, drive inertia, joint limits and torque limits', async () => {
    const sheet = sheetFromStudy(DEMO, 1, DESIGNS[0]!.values);
    const sim = await SimulatedModel.load(mjcfOfSheet(DEMO.study, sheet), 'candidate-properties.xml');
    try {
      // Armature on the crank hinges only: N² J_rotor + J_gear = 10² · 3.4e-5 + 2.0e-5 = 3.42e-3 kg·m²
      // (derived from the demo study's invented drive data).
      const armature = Array.from(sim.armature());
      expect(armature[0]).toBeCloseTo(3.42e-3, 15);
      expect(armature[2]).toBeCloseTo(3.42e-3, 15);
      expect(armature[1]).toBe(0);
      expect(armature[3]).toBe(0);
      // Body masses: world, crank 1, rod 1, end mass, crank 2, rod 2 (tree order); total = moving mass + payload.
      const masses = Array.from(sim.bodyMasses());
      const total = masses.reduce((a, b) => a + b, 0);
      expect(Math.abs(total - (sheet.movingMass + sheet.payloadMass))).toBeLessThan(1e-12);
      expect(masses[3]).toBeCloseTo(0.65, 15); // end hub 0.15 kg + payload 0.5 kg (study values)
      // Joint limits −200°…100° on the cranks (study), none on the elbows.
      const range = sim.jointRange('theta_1')!;
      expect(range[0]).toBeCloseTo((-200 * Math.PI) / 180, 14);
      expect(range[1]).toBeCloseTo((100 * Math.PI) / 180, 14);
      expect(sim.jointRange('elbow_1')).toBeNull();
      // Torque limit η N τ_peak = 0.85 · 10 · 3.8 = 32.3 N·m (derived from the study's drive data).
      expect(sim.ctrlRange(0)[1]).toBeCloseTo(32.3, 12);
      expect(sim.ctrlRange(1)[0]).toBeCloseTo(-32.3, 12);
    } finally {
      sim.dispose();
    }
  });
});
