/** Outlier-robust scatter axes of the report (scatterClips in src/report/report.ts) on constructed rows. */
import { describe, expect, it } from 'vitest';
import { MEMBER_STATUS, scatterClips, type ReportData } from '../../src/report/report.js';

describe('scatter axes robust to outliers', () => {
  const data = { study: { objectives: [{ metric: 'gci', sense: 'max' }, { metric: 'peak_gravity_torque', sense: 'min' }] } } as unknown as ReportData;
  const rows = Array.from({ length: 100 }, (_, i) => ({
    id: i,
    drawOrder: 0,
    status: i < 10 ? MEMBER_STATUS.front : MEMBER_STATUS.feasible,
    gci: 0.5 + i / 400,
    // One design at 250 N·m; the others between 1 and 3 N·m.
    peak_gravity_torque: i === 99 ? 250 : 1 + (2 * i) / 98,
  }));

  it('clips an axis stretched by one outlier and counts what lies beyond', () => {
    const [gci, torque] = scatterClips(data, rows);
    expect(gci).toMatchObject({ below: 0, above: 0, domain: [0.5, 0.5 + 99 / 400] });
    expect(torque!.above).toBe(1);
    expect(torque!.below).toBe(0);
    expect(torque!.range).toEqual([1, 250]);
    // Derived: the 98th percentile of the values is about 3 N·m; with 4 % padding the axis ends near 3.1 N·m.
    expect(torque!.domain[1]).toBeGreaterThan(2.9);
    expect(torque!.domain[1]).toBeLessThan(3.5);
  });

  it('keeps every front design inside the axes, even an extreme one', () => {
    const withFrontOutlier = rows.map((r) => (r.id === 0 ? { ...r, peak_gravity_torque: 40 } : r));
    const torque = scatterClips(data, withFrontOutlier)[1]!;
    expect(torque.domain[1]).toBeGreaterThanOrEqual(40);
    expect(torque.above).toBe(1); // the 250 N·m design, not on the front
  });
});
