/**
 * Evaluation of one candidate design: the public `Evaluator` of a study. A single-architecture study
 * (any architecture) runs the one evaluator of evaluateArchitecture.ts; a comparison study delegates
 * to one of those per member. Constraints live in constraints.ts, task samples in taskSamples.ts,
 * the grid sampling in workspace.ts and the usability rule in usability.ts (re-exported here).
 *
 * An Evaluator is made once per study and per worker; it owns every buffer, so evaluating a design
 * allocates only its small result object. Pure: no I/O.
 */
import { designVariables, memberDesign, resolveDesign, type DesignVariable, type ResolvedDesign } from './designSpace.js';
import type { Study } from '../study/types.js';
import type { ArchitectureModelBase, PlanarArchitecture } from '../architectures/types.js';
import { ArchitectureEvaluator } from './evaluateArchitecture.js';
import { comparisonConstraints, type ConstraintDefinition, type DesignEvaluation } from './constraints.js';

export {
  applyConstraints,
  comparisonConstraints,
  constraintBounds,
  constraintDefinitions,
  constraintMargin,
  type ConstraintDefinition,
  type DesignEvaluation,
} from './constraints.js';
export { taskSamples } from './taskSamples.js';
export { architectureUsableMargin, usabilityMargin } from './usability.js';

/** Metrics that `evaluateWithWorkspace` takes from an earlier evaluation, in its argument order. */
export const WORKSPACE_METRICS = ['reachable_area', 'workspace_area', 'task_coverage', 'inscribed_radius'] as const;

/** What every evaluation path offers (five-bar engine, architecture interface, comparison). */
interface EvaluationPath {
  readonly variables: readonly DesignVariable[];
  readonly constraints: readonly ConstraintDefinition[];
  evaluate(design: ArrayLike<number>): DesignEvaluation;
  evaluateWithWorkspace(design: ArrayLike<number>, workspace: ArrayLike<number>): DesignEvaluation;
}

/** The architecture, model and resolved design behind one design vector (any architecture). */
export interface ArchitectureDesign {
  /** The study the model was built from: the study itself, or for a comparison study the selected member. */
  readonly study: Study;
  readonly architecture: PlanarArchitecture<ArchitectureModelBase>;
  readonly model: ArchitectureModelBase;
  readonly resolved: ResolvedDesign;
}

/**
 * A comparison study: one evaluator per member; the design variable `architecture` picks the member,
 * whose own variables are taken from the design vector (the other members' values are carried but
 * ignored). Constraint margins of constraints the member does not have are NaN; the violation is
 * the member's.
 */
class ComparisonEvaluator implements EvaluationPath {
  readonly variables: readonly DesignVariable[];
  readonly constraints: readonly ConstraintDefinition[];
  private readonly study: Study;
  readonly members: readonly Evaluator[];
  private readonly columns: readonly (readonly number[])[];

  constructor(study: Study) {
    this.study = study;
    this.variables = designVariables(study);
    this.members = study.members!.map((m) => new Evaluator(m));
    const { union, columns } = comparisonConstraints(this.members.map((m) => m.constraints));
    this.constraints = union;
    this.columns = columns;
  }

  private spread(index: number, inner: DesignEvaluation): DesignEvaluation {
    const n = this.constraints.length;
    const margins = new Float64Array(n).fill(Number.NaN);
    const constraintMin = new Float64Array(n).fill(Number.NaN);
    const constraintMax = new Float64Array(n).fill(Number.NaN);
    this.columns[index]!.forEach((column, k) => {
      margins[column] = inner.margins[k]!;
      constraintMin[column] = inner.constraintMin[k]!;
      constraintMax[column] = inner.constraintMax[k]!;
    });
    return { metrics: inner.metrics, margins, constraintMin, constraintMax, violation: inner.violation, feasible: inner.feasible, ...(inner.errors ? { errors: inner.errors } : {}) };
  }

  evaluate(design: ArrayLike<number>): DesignEvaluation {
    const m = memberDesign(this.study, this.variables, design);
    return this.spread(m.index, this.members[m.index]!.evaluate(m.design));
  }

  evaluateWithWorkspace(design: ArrayLike<number>, workspace: ArrayLike<number>): DesignEvaluation {
    const m = memberDesign(this.study, this.variables, design);
    return this.spread(m.index, this.members[m.index]!.evaluateWithWorkspace(m.design, workspace));
  }
}

/**
 * Evaluator of a study, made once per study and per worker: the one evaluator of
 * evaluateArchitecture.ts for a single-architecture study; a comparison study delegates to its members.
 */
export class Evaluator {
  readonly study: Study;
  readonly variables: readonly DesignVariable[];
  readonly constraints: readonly ConstraintDefinition[];
  private readonly path: ArchitectureEvaluator | ComparisonEvaluator;

  constructor(study: Study) {
    this.study = study;
    this.path = study.members ? new ComparisonEvaluator(study) : new ArchitectureEvaluator(study);
    this.variables = this.path.variables;
    this.constraints = this.path.constraints;
  }

  evaluate(design: ArrayLike<number>): DesignEvaluation {
    return this.path.evaluate(design);
  }

  evaluateWithWorkspace(design: ArrayLike<number>, workspace: ArrayLike<number>): DesignEvaluation {
    return this.path.evaluateWithWorkspace(design, workspace);
  }

  /** Points solved for the workspace of the last evaluation (single-architecture studies; 0 otherwise). */
  lastWorkspaceSamples(): number {
    return this.path instanceof ArchitectureEvaluator ? this.path.lastSamples : 0;
  }

  /** Geometry, working mode and drives of a design vector (a comparison study: of the selected member). */
  resolve(design: ArrayLike<number>): ResolvedDesign {
    return resolveDesign(this.study, this.variables, design);
  }

  /**
   * Architecture, immutable model and resolved design of a design vector, for any study: the model
   * the evaluation uses (for a 3-DOF with characteristic_length auto, the per-design L). Poses: `architecture.createPose()`, then
   * `architecture.solvePose(model, pose, x, y, phi)` and `poseDynamics(model, pose)`.
   */
  architectureDesign(design: ArrayLike<number>): ArchitectureDesign {
    const path = this.path;
    if (path instanceof ComparisonEvaluator) {
      const m = memberDesign(this.study, this.variables, design);
      return path.members[m.index]!.architectureDesign(m.design);
    }
    const resolved = this.resolve(design);
    return { study: this.study, architecture: path.architecture, model: path.buildModel(resolved), resolved };
  }
}
