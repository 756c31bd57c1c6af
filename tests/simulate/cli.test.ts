/**
 * `loopsmith simulate` through the command-line entry (main(), in process): charts, CSV and summary
 * written for the demo duty cycle, the JSON summary, and clear user errors.
 */
import { afterAll, describe, expect, it, vi } from 'vitest';
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { main } from '../../src/cli/main.js';

const REPO = fileURLToPath(new URL('../../', import.meta.url));
const CYCLE_STUDY = join(REPO, 'studies', 'parcel-sorter-cycle.yaml');
const PLAIN_STUDY = join(REPO, 'studies', 'parcel-sorter.yaml');
const directory = mkdtempSync(join(tmpdir(), 'loopsmith-simulate-'));
afterAll(() => rmSync(directory, { recursive: true, force: true }));

/** Runs main(args) capturing what it writes to stdout and stderr. */
async function run(args: string[]): Promise<{ code: number; stdout: string; stderr: string }> {
  let stdout = '';
  let stderr = '';
  const out = vi.spyOn(process.stdout, 'write').mockImplementation((chunk: string | Uint8Array) => ((stdout += String(chunk)), true));
  const err = vi.spyOn(process.stderr, 'write').mockImplementation((chunk: string | Uint8Array) => ((stderr += String(chunk)), true));
  try {
    const code = await main(args);
    return { code, stdout, stderr };
  } finally {
    out.mockRestore();
    err.mockRestore();
  }
}

describe('loopsmith simulate', () => {
  it('writes the charts, the CSV and the summary for the demo cycle and exits 0', async () => {
    const outDir = join(directory, 'demo');
    const result = await run(['simulate', CYCLE_STUDY, '--out', outDir, '--controller', 'pd', '--interval', '2 ms']);
    expect(result.code, result.stderr).toBe(0);
    expect(result.stdout).toMatch(/controller: pd/);
    expect(result.stdout).toMatch(/max loop-closure error/);
    for (const stem of ['torque', 'speed', 'tracking-error', 'closure', 'torque-speed']) {
      const svg = readFileSync(join(outDir, `${stem}.svg`), 'utf8');
      expect(svg.startsWith('<svg')).toBe(true);
      const png = readFileSync(join(outDir, `${stem}.png`));
      expect(png.subarray(1, 4).toString('latin1')).toBe('PNG');
    }
    const csv = readFileSync(join(outDir, 'timeseries.csv'), 'utf8').trim().split('\n');
    expect(csv[0]).toMatch(/^t_s,theta1_rad,theta2_rad,/);
    expect(csv.length).toBe(1 + 601); // 1.2 s at 2 ms, both ends
    const header = csv[0]!.split(',');
    const last = csv[csv.length - 1]!.split(',');
    expect(Number(last[header.indexOf('t_s')])).toBeCloseTo(1.2, 12);
    expect(Math.abs(Number(last[header.indexOf('closure_error_m')]))).toBeLessThan(1e-6);
    const summary = JSON.parse(readFileSync(join(outDir, 'summary.json'), 'utf8')) as { controller: string; maxClosureError: number; joints: { maxTrackingError: number }[] };
    expect(summary.controller).toBe('pd');
    expect(summary.maxClosureError).toBeLessThan(1e-6);
    expect(summary.joints[0]!.maxTrackingError).toBeGreaterThan(0);
  });

  it('prints each design variable and tracking error in its own unit (an angle in deg, a slider error in mm)', async () => {
    const result = await run(['simulate', join(REPO, 'studies', 'platform-3rpr-cycle.yaml'), '--duration', '0.2 s']);
    expect(result.code, result.stderr).toBe(0);
    expect(result.stdout).toMatch(/platform_twist 45 deg/);
    expect(result.stdout).toMatch(/joint 1 +\S+ mm /);
    const crank = await run(['simulate', CYCLE_STUDY, '--duration', '0.2 s']);
    expect(crank.stdout).toMatch(/joint 1 +\S+ mrad /);
  });

  it('prints the summary as JSON with --json', async () => {
    const result = await run(['simulate', CYCLE_STUDY, '--json', '--duration', '0.3 s', '--no-friction']);
    expect(result.code, result.stderr).toBe(0);
    const summary = JSON.parse(result.stdout) as { study: string; controller: string; duration: number; maxClosureError: number; joints: { maxTrackingError: number; peakTorque: number }[] };
    expect(summary.study).toBe('parcel-sorter-cycle');
    expect(summary.controller).toBe('computed-torque');
    expect(summary.duration).toBeCloseTo(0.3, 12);
    expect(summary.joints[0]!.maxTrackingError).toBeLessThan(1e-8);
    expect(summary.joints[0]!.peakTorque).toBeGreaterThan(0);
  });

  it('refuses a study without a duty cycle with exit code 1 and a clear message', async () => {
    const result = await run(['simulate', PLAIN_STUDY, '--out', join(directory, 'none')]);
    expect(result.code).toBe(1);
    expect(result.stderr).toMatch(/no duty_cycle section/);
    expect(existsSync(join(directory, 'none', 'torque.svg'))).toBe(false);
  });

  it('rejects an unknown controller as a command-line mistake (exit 2) and a bad duration as a user error (exit 1)', async () => {
    expect((await run(['simulate', CYCLE_STUDY, '--controller', 'bang-bang'])).code).toBe(2);
    const bad = await run(['simulate', CYCLE_STUDY, '--duration', '0 s']);
    expect(bad.code).toBe(1);
    expect(bad.stderr).toMatch(/--duration/);
  });
});
