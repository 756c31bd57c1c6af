/** Kinds of physical quantity a study value or a metric can have (units: src/study/units.ts). */
export type QuantityKind =
  | 'length'
  | 'mass'
  | 'time'
  | 'angle'
  | 'speed'
  | 'acceleration'
  | 'angularSpeed'
  | 'angularAcceleration'
  | 'force'
  | 'torque'
  | 'rotationalStiffness'
  | 'linearStiffness'
  | 'modulus' /* Pa */
  | 'density' /* kg/m^3 */
  | 'massPerLength' /* kg/m */
  | 'inertia' /* kg*m^2 */
  | 'area'
  | 'secondMomentOfArea' /* m^4 */
  | 'frequency'
  | 'power'
  | 'dimensionless';

/** Every quantity kind, in a stable order (useful for schema generation and tests). */
export const QUANTITY_KINDS: readonly QuantityKind[] = [
  'length',
  'mass',
  'time',
  'angle',
  'speed',
  'acceleration',
  'angularSpeed',
  'angularAcceleration',
  'force',
  'torque',
  'rotationalStiffness',
  'linearStiffness',
  'modulus',
  'density',
  'massPerLength',
  'inertia',
  'area',
  'secondMomentOfArea',
  'frequency',
  'power',
  'dimensionless',
];
