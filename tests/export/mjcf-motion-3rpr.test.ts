/**
 * The exported MJCF of the 3-RPR demo (platform-3rpr-cycle) stays true in motion in MuJoCo with its own settings,
 * and a wrong mass or drive inertia in the file is caught (tests/export/mjcfMotion.ts).
 */
import { it } from 'vitest';
import { checkDemoInMotion } from './mjcfMotion.js';

it('3-RPR: the exported model follows loopsmith\'s simulation on the duty cycle (0.05 mm, loop gap 0.01 mm); a wrong mass or drive inertia fails', async () => {
  for (const line of await checkDemoInMotion('platform-3rpr-cycle', 'platform')) console.info(line);
}, 120_000);
