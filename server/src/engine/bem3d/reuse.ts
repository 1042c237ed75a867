// Matrix entries kept across a geometry edit (methods.md, live use: reuse what an edit leaves alone).
// An entry A_ij depends only on panel j's triangle, on collocation point i and on the images
// (system.ts), so when an edit changes one electrode, the entries among the others' panels are
// those of the earlier matrix. An electrode is kept when its panels are the same triangles with the
// same collocation points, in the same order (the mesh is built electrode by electrode from the
// shape and the mesh setting alone: mesh/index.ts); the images must be the same planes.
// The same walk pairs panels electrode by electrode for warm starts (panelPairs).
import type { Bem3dSystem, MatrixReuse } from './system';

/** Each electrode's panel indices, in mesh order. */
function panelsOf(s: Bem3dSystem): Map<number, number[]> {
  const lists = new Map<number, number[]>();
  for (let i = 0; i < s.n; i++) {
    const e = s.mesh.electrode[i];
    let list = lists.get(e);
    if (!list) lists.set(e, (list = []));
    list.push(i);
  }
  return lists;
}

/**
 * The earlier panel for each new one, pairing each electrode's panels in mesh order, when every
 * electrode has as many panels as before (an edit that moved, turned or resized a body without
 * changing its panel count; kept bodies pair with themselves); null otherwise. For warm starts: an
 * earlier solution's value on the paired panel is a good first guess.
 */
export function panelPairs(earlier: Bem3dSystem, sys: Bem3dSystem): Int32Array | null {
  const before = panelsOf(earlier), after = panelsOf(sys);
  if (before.size !== after.size) return null;
  const from = new Int32Array(sys.n).fill(-1);
  for (const [e, list] of after) {
    const old = before.get(e);
    if (!old || old.length !== list.length) return null;
    list.forEach((i, k) => (from[i] = old[k]));
  }
  return from;
}

/** The reuse of an earlier system's dense matrix for a new system, or null when nothing is kept. */
export function matrixReuse(earlier: { sys: Bem3dSystem; matrix: Float64Array }, sys: Bem3dSystem): MatrixReuse | null {
  const a = earlier.sys, b = sys;
  if (JSON.stringify(a.images) !== JSON.stringify(b.images)) return null;
  const before = panelsOf(a), after = panelsOf(b);
  const from = new Int32Array(b.n).fill(-1);
  let kept = 0;
  for (const [e, list] of after) {
    const old = before.get(e);
    if (!old || old.length !== list.length) continue;
    if (!list.every((i, k) => samePanel(b, i, a, old[k]))) continue;
    list.forEach((i, k) => (from[i] = old[k]));
    kept += list.length;
  }
  return kept > 0 ? { matrix: earlier.matrix, n: a.n, from, thinRows: a.thinRows } : null;
}

/** The same triangle (vertices in order) and the same collocation point. */
function samePanel(b: Bem3dSystem, i: number, a: Bem3dSystem, j: number): boolean {
  const vb = b.panels.vertices, va = a.panels.vertices;
  for (let c = 0; c < 9; c++) if (vb[9 * i + c] !== va[9 * j + c]) return false;
  for (let c = 0; c < 3; c++) if (b.points[3 * i + c] !== a.points[3 * j + c]) return false;
  return true;
}
