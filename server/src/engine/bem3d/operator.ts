// The 3d system as a LinearOperator for the chosen solver: a dense matrix for the dense solvers,
// or whatever a registered method builds (e.g. a compressed or treecode operator) from the system.
import { spatialOrder } from '../linear/block-jacobi';
import { twoLevel } from '../linear/two-level';
import { denseOperator, needsDenseMatrix, type LinearOperator, type SolverKind } from '../linear/solver';
import { assembleDense, entry, type Bem3dSystem, type MatrixReuse } from './system';

/** Panels per block of the block-Jacobi part of the dense iterative solver's preconditioner. */
export const PRECONDITIONER_BLOCK = 64;
/** Panels per cluster of its coarse part (linear/two-level.ts): G = n/8 coarse unknowns. */
export const PRECONDITIONER_CLUSTER = 8;

type OperatorFactory = (sys: Bem3dSystem, isCancelled?: () => boolean) => LinearOperator | null;
const factories = new Map<string, OperatorFactory>();

/** Lets a matrix-free method build its own operator for the 3d system (see registerSolver for its solver). */
export function registerBem3dOperator(kind: string, factory: OperatorFactory): void {
  factories.set(kind, factory);
}

/** The operator of the system for a solver kind; null when cancelled. A dense one copies what it can from `reuse`. */
export function buildOperator(sys: Bem3dSystem, kind: SolverKind, isCancelled?: () => boolean, reuse?: MatrixReuse | null): LinearOperator | null {
  const factory = factories.get(kind);
  if (factory) return factory(sys, isCancelled);
  if (needsDenseMatrix(kind)) {
    const A = assembleDense(sys, isCancelled, reuse);
    if (!A) return null;
    const op = denseOperator(sys.n, A);
    if (kind === 'dense-lu') return op;
    // Iterative: precondition with a coarse correction over clusters of nearby panels, then the
    // diagonal blocks of nearby panels (per electrode); the clusters nest in the blocks.
    const order = spatialOrder(sys.points, sys.mesh.electrode);
    const pc = twoLevel(sys.n, A, order, PRECONDITIONER_BLOCK, PRECONDITIONER_CLUSTER);
    return { ...op, precondition: pc.apply, preconditionMany: pc.applyMany };
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
