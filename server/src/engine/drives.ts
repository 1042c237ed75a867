// Drives from unit solutions, generic over the space. By linearity the conductors' charges are
//   Q = C·V + q_f,
// with C the Maxwell capacitance matrix (one solve per electrode at 1 V, the rest at 0) and q_f the
// charges induced by the free charges with every electrode grounded (one more solve). Electrodes
// held at a potential fix V_k; fixed-charge and floating (Q = 0) ones fix Q_k, and their potentials
// follow from the small system  C_UU·V_U = Q_U − q_f,U − C_UK·V_K  (U: unknown potentials, K: known).
// So an edit that changes only drives needs no new field solve.
import type { Drive } from '../../../grammar/scene';
import { luFactor, luSolve } from './linear/dense-lu';

export interface DriveSolution {
  potentials: number[];
  charges: number[];
  /** True when the small system was singular (e.g. a floating electrode with no capacitance); its potentials are then 0. */
  singular: boolean;
}

/** Potentials and charges of every electrode for the given drives. */
export function applyDrives(C: readonly (readonly number[])[], induced: readonly number[], drives: readonly Drive[]): DriveSolution {
  const k = drives.length;
  const potentials = new Array<number>(k).fill(0);
  const unknown: number[] = [];
  drives.forEach((d, i) => {
    if (d.kind === 'potential') potentials[i] = d.value;
    else unknown.push(i);
  });
  let singular = false;
  if (unknown.length > 0) {
    const m = unknown.length;
    const a = new Float64Array(m * m);
    const b = new Float64Array(m);
    unknown.forEach((i, r) => {
      const d = drives[i];
      let rhs = (d.kind === 'charge' ? d.value : 0) - induced[i];
      for (let j = 0; j < k; j++) if (drives[j].kind === 'potential') rhs -= C[i][j] * potentials[j];
      b[r] = rhs;
      unknown.forEach((j, c) => (a[r * m + c] = C[i][j]));
    });
    const f = luFactor(m, a)!;
    if (f.singular) singular = true;
    else {
      const v = luSolve(f, b);
      unknown.forEach((i, r) => (potentials[i] = v[r]));
    }
  }
  const charges = drives.map((_, i) => {
    let q = induced[i];
    for (let j = 0; j < k; j++) q += C[i][j] * potentials[j];
    return q;
  });
  // A fixed charge is exact by construction: report it as given rather than with rounding.
  drives.forEach((d, i) => {
    if (!singular && d.kind === 'charge') charges[i] = d.value;
    if (!singular && d.kind === 'floating') charges[i] = 0;
  });
  return { potentials, charges, singular };
}

/**
 * Floating electrodes that nothing can charge: every potential drive is 0 V, every fixed charge 0 C
 * and there is no free charge, so the floating electrode sits at 0 V with no charge on it.
 */
export function unchargedFloating(drives: readonly Drive[], freeChargeTotalAbs: number): number[] {
  const anySource = freeChargeTotalAbs > 0 || drives.some((d) => (d.kind === 'potential' || d.kind === 'charge') && d.value !== 0);
  if (anySource) return [];
  return drives.flatMap((d, i) => (d.kind === 'floating' ? [i] : []));
}
