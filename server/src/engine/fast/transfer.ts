// Warm starts after a geometry edit: carry a solution from the old mesh to the new one. Each new
// panel takes the value of the nearest old panel (by centroid) on the same electrode. Densities
// vary smoothly along a surface away from edges, so this is a good start for GMRES, which corrects
// the rest (common practice: nearest-neighbour transfer for iterative warm starts).
import { boxDistance, buildClusterTree, type ClusterTree } from './cluster-tree';

interface Located {
  centroid: Float64Array;
  electrode: Uint16Array;
}

/** Values on the new panels; panels of an electrode that the old mesh lacks get 0. */
export function transferSolution(oldMesh: Located, oldX: Float64Array, newMesh: Located): Float64Array {
  const out = new Float64Array(newMesh.electrode.length);
  const byElectrode = new Map<number, number[]>();
  oldMesh.electrode.forEach((e, j) => {
    const list = byElectrode.get(e);
    if (list) list.push(j);
    else byElectrode.set(e, [j]);
  });
  const trees = new Map<number, { ids: number[]; tree: ClusterTree; pts: Float64Array }>();
  for (const [e, ids] of byElectrode) {
    const pts = new Float64Array(3 * ids.length);
    ids.forEach((j, k) => pts.set(oldMesh.centroid.subarray(3 * j, 3 * j + 3), 3 * k));
    trees.set(e, { ids, tree: buildClusterTree(pts, 8), pts });
  }
  const probe = buildClusterTree(new Float64Array(3), 1); // a one-point tree to measure box distances
  for (let i = 0; i < out.length; i++) {
    const t = trees.get(newMesh.electrode[i]);
    if (!t) continue;
    for (let c = 0; c < 3; c++) {
      probe.boxMin[c] = probe.boxMax[c] = newMesh.centroid[3 * i + c];
    }
    out[i] = oldX[t.ids[nearest(t.tree, t.pts, probe)]];
  }
  return out;
}

/** Index (into the tree's points) of the point nearest to the one-point tree `probe`. */
function nearest(tree: ClusterTree, pts: Float64Array, probe: ClusterTree): number {
  let best = Infinity, bestK = 0;
  const x = probe.boxMin[0], y = probe.boxMin[1], z = probe.boxMin[2];
  const stack = [0];
  while (stack.length > 0) {
    const v = stack.pop()!;
    if (boxDistance(tree, v, probe, 0) >= best) continue;
    if (tree.left[v] >= 0) {
      stack.push(tree.right[v], tree.left[v]);
      continue;
    }
    for (let k = tree.start[v]; k < tree.start[v] + tree.count[v]; k++) {
      const p = tree.order[k];
      const d = Math.hypot(pts[3 * p] - x, pts[3 * p + 1] - y, pts[3 * p + 2] - z);
      if (d < best) {
        best = d;
        bestK = p;
      }
    }
  }
  return bestK;
}
