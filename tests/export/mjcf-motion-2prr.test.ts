/**
 * The exported MJCF of the 2-PRR demo (rail-sorter-2prr-cycle) stays true in motion in MuJoCo with its own settings,
 * and a wrong mass or drive inertia in the file is caught (tests/export/mjcfMotion.ts).
 */
import { it } from 'vitest';
import { checkDemoInMotion } from './mjcfMotion.js';

it('2-PRR: the exported model follows loopsmith\'s simulation on the duty cycle (0.05 mm, loop gap 0.01 mm); a wrong mass or drive inertia fails', async () => {
  for (const line of await checkDemoInMotion('rail-sorter-2prr-cycle', 'end_mass')) console.info(line);
}, 120_000);
