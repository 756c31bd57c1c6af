/**
 * The five-bar names of the public API (src/public/fiveBar.ts: buildFiveBarModel, FiveBarPose,
 * solvePose, poseDynamics, forwardKinematics, footprint), which now call the one engine, against the
 * five-bar's closed forms (tests/helpers/fiveBarClosedForm.ts, the former five-bar engine) on the
 * five-bar demo studies: the model a study gives and every per-pose quantity agree.
 * Source: derived here — both are the same mechanism and lumping (uniform bars, elbow hub as a point
 * mass at the crank end, reflected drive inertia), coded twice; only rounding may differ.
 */
import { describe, expect, it } from 'vitest';
import { join } from 'node:path';
import * as api from '../../src/index.js';
import { designFromValues, designVariables, resolveDesign } from '../../src/mechanics/designSpace.js';
import { loadStudyFile } from '../../src/study/parse.js';
import { REPO_ROOT } from '../fixtures/harness.js';
import * as closed from '../helpers/fiveBarClosedForm.js';

const STUDIES = ['parcel-sorter.yaml', 'parcel-sorter-drives.yaml', 'marking-table.yaml'] as const;

function relativeError(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let scale = 0;
  let diff = 0;
  for (let i = 0; i < a.length; i++) {
    scale = Math.max(scale, Math.abs(b[i]!));
    diff = Math.max(diff, Math.abs(a[i]! - b[i]!));
  }
  return scale === 0 ? diff : diff / scale;
}

describe('the public five-bar names on the one engine', () => {
  it('give the closed forms\' pose, J, D, τ_g, K_x and forward kinematics on every five-bar demo study', () => {
    let worst = 0;
    let checked = 0;
    for (const name of STUDIES) {
      const study = loadStudyFile(join(REPO_ROOT, 'studies', name)).study;
      const variables = designVariables(study);
      const resolved = resolveDesign(study, variables, designFromValues(variables, study.baseline, true));
      const model = api.buildFiveBarModel(study, resolved);
      const former = closed.buildFiveBarModel(study, resolved);
      expect(Math.abs(api.footprint(model) - closed.footprint(former))).toBeLessThan(1e-12);
      const pose = new api.FiveBarPose();
      const engine = new closed.FiveBarPose();
      const fk = new Float64Array(2);
      const r = study.task.region!;
      const half = r.shape === 'rectangle' ? Math.max(r.width, r.height) : 2 * r.radius;
      for (let i = 0; i <= 10; i++) {
        for (let j = 0; j <= 10; j++) {
          const x = r.centreX - half + (i * half) / 5;
          const y = r.centreY - half + (j * half) / 5;
          const status = api.solvePose(model, pose, x, y);
          expect(status).toBe(closed.solvePose(former, engine, x, y));
          if (status !== api.PoseStatus.Assembled || pose.inverseCondition < 0.05) continue;
          api.poseDynamics(model, pose);
          closed.poseDynamics(former, engine);
          const e = engine;
          worst = Math.max(
            worst,
            relativeError(pose.q, [e.theta1, e.theta2]),
            relativeError(pose.J, [e.j11, e.j12, e.j21, e.j22]),
            relativeError(pose.D, [e.d11, e.d12, e.d12, e.d22]),
            relativeError(pose.tauG, [e.tauG1, e.tauG2]),
            relativeError(pose.Kx, [e.kx11, e.kx12, e.kx12, e.kx22]),
          );
          expect(api.forwardKinematics(model, pose.q[0]!, pose.q[1]!, fk)).toBe(true);
          worst = Math.max(worst, Math.hypot(fk[0]! - x, fk[1]! - y) / half);
          checked++;
        }
      }
    }
    console.info(`public five-bar names vs closed forms: worst relative difference ${worst.toExponential(2)} over ${checked} poses`);
    expect(checked).toBeGreaterThan(100);
    expect(worst).toBeLessThan(1e-12);
  });

  it('refuses a study of another architecture (negative control)', () => {
    const study = loadStudyFile(join(REPO_ROOT, 'studies', 'platform-3rrr.yaml')).study;
    const variables = designVariables(study);
    const resolved = resolveDesign(study, variables, designFromValues(variables, study.baseline, true));
    expect(() => api.buildFiveBarModel(study, resolved)).toThrow(api.ApiArgumentError);
  });
});
