/**
 * Shared body of the MJCF-in-motion tests (tests/export/mjcf-motion-*.test.ts): the baseline design of
 * a demo study exported as the `export` command exports it (home pose of the candidate sheet), run in
 * MuJoCo (npm mujoco-js) with the file's own settings against loopsmith's rigid simulation on the
 * study's duty cycle at its evaluated pace, or on the standard motion when the study has none
 * (src/export/mjcfCheck.ts). Bounds from the issue: end point within 0.05 mm, loop gap below 0.01 mm,
 * for the recorded computed-torque efforts and for zero effort. Negative controls: the same file with
 * a wrong mass (the end body: end mass or platform, +3 %) and with a wrong drive inertia (armature of
 * actuator 1 ×1.3) must fail the same check — a real error in the exported file is caught.
 */
import { expect } from 'vitest';
import { chooseDesign } from '../../src/api/design.js';
import { architectureHomePoint } from '../../src/export/candidate.js';
import { architectureMjcf, MJCF_TIMESTEP } from '../../src/export/mjcf.js';
import { mjcfCheckReference, runMjcfCheck, MJCF_CHECK_TOLERANCES, type MjcfCheckResult } from '../../src/export/mjcfCheck.js';
import { Evaluator } from '../../src/mechanics/evaluate.js';
import { pacedCycle } from '../../src/simulate/study.js';
import { loadStudyFile } from '../../src/study/parse.js';

/** The file with the mass of body `body`'s own inertial multiplied by `factor`. */
export function withBodyMass(xml: string, body: string, factor: number): string {
  const at = xml.indexOf(`<body name="${body}"`);
  expect(at, body).toBeGreaterThan(0);
  const inertial = /<inertial [^>]*mass="([^"]+)"/.exec(xml.slice(at))!;
  const mass = Number(inertial[1]);
  expect(mass).toBeGreaterThan(0);
  const start = at + inertial.index;
  return xml.slice(0, start) + inertial[0].replace(`mass="${inertial[1]}"`, `mass="${mass * factor}"`) + xml.slice(start + inertial[0].length);
}

/** The file with the first non-zero armature (the drive inertia of actuator 1) multiplied by `factor`. */
export function withDriveInertia(xml: string, factor: number): string {
  const match = /armature="([^"]+)"/.exec(xml)!;
  const armature = Number(match[1]);
  expect(armature).toBeGreaterThan(0);
  return xml.slice(0, match.index) + `armature="${armature * factor}"` + xml.slice(match.index + match[0].length);
}

const summary = (r: MjcfCheckResult): string =>
  r.runs.map((run) => `${run.name}: end point ${(run.endPointError * 1e3).toExponential(2)} mm (final ${(run.finalEndPointError * 1e3).toExponential(2)}), ` +
    `loop gap ${(run.loopGap * 1e3).toExponential(2)} mm, travel ${(run.travel * 1e3).toFixed(1)} mm over ${run.duration.toFixed(3)} s`).join('; ');

/** Runs the check and both negative controls on the baseline design of `studyName`; returns the lines to print. */
export async function checkDemoInMotion(studyName: string, endBody: 'end_mass' | 'platform'): Promise<string[]> {
  const study = loadStudyFile(new URL(`../../studies/${studyName}.yaml`, import.meta.url).pathname).study;
  const choice = chooseDesign(study, []);
  const built = new Evaluator(choice.study).architectureDesign(choice.design);
  const home = architectureHomePoint(built.architecture, built.model, choice.study);
  const homePose = { x: home.point.x, y: home.point.y, phi: home.phi };
  const xml = architectureMjcf(built.architecture, built.model, homePose);
  const t0 = performance.now();
  const reference = mjcfCheckReference(built.architecture, built.model, pacedCycle(choice.study), homePose, MJCF_TIMESTEP);
  const referenceSeconds = (performance.now() - t0) / 1000;
  const result = await runMjcfCheck(reference, xml);
  const lines = [
    `${studyName} (${built.architecture.name}, ${result.motion}, ${result.cycleTime.toFixed(3)} s; ${result.settings.integrator} ${result.settings.timestep * 1e3} ms, solref ${result.settings.loopClosureSolref}): ${summary(result)}; ` +
      `recorded vs replayed efforts ${result.recordedEffortDeviation.toExponential(2)}; MuJoCo ${result.simulatedTimePerWallSecond.toFixed(2)} simulated s per wall s; loopsmith reference ${referenceSeconds.toFixed(1)} s`,
  ];
  expect(result.recordedEffortDeviation).toBeLessThan(1e-6);
  for (const run of result.runs) {
    expect(run.endPointError, `${studyName} ${run.name}`).toBeLessThanOrEqual(MJCF_CHECK_TOLERANCES.endPoint);
    expect(run.loopGap, `${studyName} ${run.name}`).toBeLessThanOrEqual(MJCF_CHECK_TOLERANCES.loopGap);
    expect(run.passed).toBe(true);
  }
  // Not a standstill: the recorded run follows the whole motion, the free run really moves.
  expect(result.runs[0]!.travel).toBeGreaterThan(0.01);
  expect(result.runs[1]!.travel).toBeGreaterThan(0.005);
  expect(result.runs[1]!.duration).toBeGreaterThan(0.05);
  expect(result.passed).toBe(true);

  for (const [label, tampered] of [
    [`${endBody} mass +3 %`, withBodyMass(xml, endBody, 1.03)],
    ['drive inertia of actuator 1 ×1.3', withDriveInertia(xml, 1.3)],
  ] as const) {
    const wrong = await runMjcfCheck(reference, tampered);
    lines.push(`  negative control, ${label}: ${summary(wrong)} → ${wrong.passed ? 'passed (!)' : 'fails'}`);
    expect(wrong.passed, label).toBe(false);
    expect(wrong.endPointError, label).toBeGreaterThan(MJCF_CHECK_TOLERANCES.endPoint);
  }
  return lines;
}
