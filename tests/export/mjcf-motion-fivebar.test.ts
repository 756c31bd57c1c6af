/**
 * The exported MJCF of the five-bar demo (parcel-sorter-cycle) stays true in motion in MuJoCo with its
 * own settings, and a wrong mass or drive inertia in the file is caught (tests/export/mjcfMotion.ts).
 */
import { it } from 'vitest';
import { checkDemoInMotion } from './mjcfMotion.js';

it('five-bar: the exported model follows loopsmith\'s simulation on the duty cycle (0.05 mm, loop gap 0.01 mm); a wrong mass or drive inertia fails', async () => {
  for (const line of await checkDemoInMotion('parcel-sorter-cycle', 'end_mass')) console.info(line);
}, 120_000);
