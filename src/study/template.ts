/** The commented study template that `loopsmith new` writes. */
export const STUDY_TEMPLATE = `# yaml-language-server: $schema=https://loopsmith.invalid/schema/study.schema.json
# A loopsmith study. Quantities are numbers in SI units (m, kg, s, rad, N) or strings with a unit:
# "250 mm", "1.2 kg", "0.8 N*m", "3000 rpm", "70 GPa", "30 deg". Check it with: loopsmith check FILE
#
# Replace every value below with your own; the numbers shipped here are placeholders, not advice.
study: my-five-bar                    # names the default database results/<study>.db
description: What the machine must do, in one line.
architecture: five-bar

# Each geometry parameter is fixed (a length), a design variable { min, max } or tied { same_as: name }.
# Pivots: A1 = (-base_span/2, 0), A2 = (+base_span/2, base_rise). Leg i: crank_i from A_i to the
# elbow, rod_i from the elbow to the common end point.
geometry:
  base_span: { min: 50 mm, max: 300 mm }
  base_rise: 0 mm
  crank_1: { min: 150 mm, max: 400 mm }
  rod_1: { min: 200 mm, max: 500 mm }
  crank_2: { same_as: crank_1 }        # symmetric design; give bounds to let the legs differ
  rod_2: { same_as: rod_1 }

# Working mode: which side each elbow bends to, sign pair (sigma_1, sigma_2); "+" turns the crank
# counter-clockwise from the pivot-to-end-point line. A list lets the optimizer choose.
working_mode: "+-"
# Assembly mode: sign of det A; "+" keeps the end point on the left of the line elbow 1 -> elbow 2.
assembly_mode: "+"

joint_limits:                         # actuated joints; leave out for unlimited rotation
  both: { min: -90 deg, max: 270 deg }

mass:                                 # links from a section and a material, or mass_per_length
  cranks: { section: { shape: rectangular-tube, width: 30 mm, height: 20 mm, wall: 2 mm }, material: aluminium-6061 }
  rods: { section: { shape: round-tube, diameter: 20 mm, wall: 2 mm }, material: aluminium-6061 }
  elbow_hubs: 0.1 kg                  # bearing housing at each elbow
  end_hub: 0.1 kg                     # end-point joint
  payload: 0.5 kg                     # tool plus heaviest load

gravity: vertical                     # vertical plane (gravity along -y) or horizontal

drives:                               # per actuator (actuator_1, actuator_2) or both
  both:
    name: placeholder servo and gearbox
    gear_ratio: 10
    efficiency: 0.9
    rotor_inertia: 2e-5 kg*m^2        # motor side
    gear_inertia: 1e-5 kg*m^2         # referred to the joint
    rated_torque: 1.0 N*m             # motor side, continuous
    peak_torque: 3.0 N*m              # motor side
    max_speed: 3000 rpm               # motor side
    joint_stiffness: 2e4 N*m/rad      # servo plus transmission, at the joint
    encoder_counts: 131072            # per motor revolution
  torque_safety_factor: 1.5
  # Or motors and gearboxes from catalogues, chosen by the optimizer and checked along a duty cycle
  # against torque-speed envelopes and gearbox ratings (docs/drives.md), instead of "both" above:
  # motors: motors.csv                # name, rated_torque, peak_torque, max_speed, corner_speed, rotor_inertia, ...
  # gearboxes: gearboxes.csv          # name, ratios, efficiency, inertia, rated_torque, acceleration_torque, ...
  # choose: per-actuator              # design variables motor_1, gearbox_1, ... (shared: motor, gearbox)

task:
  region: { shape: rectangle, centre: [0 mm, 350 mm], width: 250 mm, height: 150 mm }
  # region: { shape: circle, centre: [0 mm, 350 mm], radius: 100 mm }
  speed: 1 m/s                        # required end-point speed, any direction
  acceleration: 10 m/s^2              # required end-point acceleration from standstill

evaluation:
  tolerance: 0.005                    # relative accuracy of the area metrics (0.5 %); grid_cells: N instead fixes a grid
  task_samples: 12                    # task-region samples across its longer side
  min_inverse_condition: 0.2          # usable poses need 1/kappa(J) at least this
  min_transmission_angle: 30 deg      # and crank-rod and rod-rod angles at least this from 0/180 deg

objectives:                           # metric and sense (min or max)
  - { metric: gci, sense: max }
  - { metric: peak_gravity_torque, sense: min }

constraints:                          # metric bounds; drive limits are added automatically
  - { metric: task_coverage, min: 1 }

baseline:                             # the design that 'loopsmith evaluate' reports
  base_span: 150 mm
  crank_1: 250 mm
  rod_1: 350 mm

optimizer:
  algorithm: nsga2                    # nsga3 for four or more objectives (reference directions)
  population: 100
  seed: 1
  # Stops when the best front found improves by less than 0.1 % over 20 generations, or at 10,000
  # evaluations; give 'generations: N' instead for a fixed count.
  convergence: { window: 20, tolerance: 0.001, max_evaluations: 10000 }
`;
