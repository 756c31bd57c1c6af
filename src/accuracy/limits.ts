/** What the built-arm models leave out (docs/accuracy.md), in the words the report shows beside its results. */
export const BUILT_ARM_LIMITS =
  'The accuracy figures are first order and static: no thermal growth, calibration or deflection under load; clearances are free play in any direction, ' +
  'which overstates the scatter of a pin a steady load keeps on one side. The stiffness takes the frame, motor mounts and bearing tilt as rigid and the servo as a spring. ' +
  'The out-of-plane mode clamps bases and rail carriages and lumps link masses at their pins. The strength checks use the payload, link weights and study end load over the region ' +
  'and the end body\'s inertia along the duty cycle (not the links\' own inertia), and leave out fatigue, stress concentrations at pin holes, ' +
  'bearing life, local buckling of thin walls and joint strength.';
