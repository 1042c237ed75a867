// The 3d system as a LinearOperator for the chosen solver: a dense matrix for the dense solvers,
// or whatever a registered method builds (e.g. a compressed or treecode operator) from the system.
import { blockJacobi, spatialGroups } from '../linear/block-jacobi';
import { denseOperator, needsDenseMatrix, type LinearOperator, type SolverKind } from '../linear/solver';
import { assembleDense, entry, type Bem3dSystem } from './system';

/** Panels per block of the block-Jacobi preconditioner of the dense iterative solver. */
export const PRECONDITIONER_BLOCK = 64;

type OperatorFactory = (sys: Bem3dSystem, isCancelled?: () => boolean) => LinearOperator | null;
const factories = new Map<string, OperatorFactory>();

/** Lets a matrix-free method build its own operator for the 3d system (see registerSolver for its solver). */
export function registerBem3dOperator(kind: string, factory: OperatorFactory): void {
  factories.set(kind, factory);
}

/** The operator of the system for a solver kind; null when cancelled. */
export function buildOperator(sys: Bem3dSystem, kind: SolverKind, isCancelled?: () => boolean): LinearOperator | null {
  const factory = factories.get(kind);
  if (factory) return factory(sys, isCancelled);
  if (needsDenseMatrix(kind)) {
    const A = assembleDense(sys, isCancelled);
    if (!A) return null;
    const op = denseOperator(sys.n, A);
    if (kind === 'dense-lu') return op;
    // Iterative: precondition with the diagonal blocks of nearby panels (per electrode).
    const precondition = blockJacobi(sys.n, A, spatialGroups(sys.points, sys.mesh.electrode, PRECONDITIONER_BLOCK));
    return { ...op, apply: op.apply, precondition };
  }
  // A method with no operator of its own: entries computed on the fly (O(N²) per product, no storage).
  const n = sys.n;
  return {
    n,
    apply(x, y) {
      for (let i = 0; i < n; i++) {
        let s = 0;
        for (let j = 0; j < n; j++) s += entry(sys, i, j) * x[j];
        y[i] = s;
      }
    },
    diagonal() {
      return Float64Array.from({ length: n }, (_, i) => entry(sys, i, i));
    },
  };
}
