// A binary cluster tree over points (panel centroids, or evaluation points), stored flat.
//
// Each node owns a contiguous range [start, start + count) of `order` (a permutation of the point
// indices) and an axis-aligned bounding box that also covers each point's extent (a panel's
// vertices), so that distances between boxes bound distances between whole panels. Nodes split at
// the median of the longest box side until they hold at most `leafSize` points (cardinality
// balanced bisection, common practice for hierarchical matrices: Hackbusch, "Hierarchical
// Matrices", Springer 2015, ch. 5). Memory is O(N); depth is about log2(N / leafSize).

export interface ClusterTree {
  /** order[k] = original index of the k-th point in tree order. */
  order: Int32Array;
  /** Per node: first position in `order`, number of points, children (−1 for a leaf). */
  start: Int32Array;
  count: Int32Array;
  left: Int32Array;
  right: Int32Array;
  /** Per node: box min (3) and max (3). */
  boxMin: Float64Array;
  boxMax: Float64Array;
  /** Per node: depth from the root (root 0). */
  level: Int32Array;
  nodeCount: number;
  leafSize: number;
}

/**
 * Builds the tree. `points` holds 3 coordinates per point; `extent` (optional) holds, per point, a
 * list of extra coordinates its box must cover (e.g. the 9 vertex coordinates of a panel).
 */
export function buildClusterTree(points: Float64Array, leafSize: number, extent?: { coords: Float64Array; stride: number }): ClusterTree {
  const n = points.length / 3;
  const order = new Int32Array(n);
  for (let i = 0; i < n; i++) order[i] = i;
  const maxNodes = Math.max(1, 2 * Math.ceil(n / Math.max(1, Math.floor(leafSize / 2))) + 1);
  const start = new Int32Array(maxNodes);
  const count = new Int32Array(maxNodes);
  const left = new Int32Array(maxNodes).fill(-1);
  const right = new Int32Array(maxNodes).fill(-1);
  const boxMin = new Float64Array(3 * maxNodes);
  const boxMax = new Float64Array(3 * maxNodes);
  const level = new Int32Array(maxNodes);
  let nodeCount = 0;
  const key = new Float64Array(n);

  const setBox = (node: number): void => {
    let x0 = Infinity, y0 = Infinity, z0 = Infinity, x1 = -Infinity, y1 = -Infinity, z1 = -Infinity;
    for (let k = start[node], end = k + count[node]; k < end; k++) {
      const i = order[k];
      const px = points[3 * i], py = points[3 * i + 1], pz = points[3 * i + 2];
      if (px < x0) x0 = px; if (px > x1) x1 = px;
      if (py < y0) y0 = py; if (py > y1) y1 = py;
      if (pz < z0) z0 = pz; if (pz > z1) z1 = pz;
      if (extent) {
        const c = extent.coords, s = extent.stride;
        for (let q = s * i, qe = q + s; q < qe; q += 3) {
          const ex = c[q], ey = c[q + 1], ez = c[q + 2];
          if (ex < x0) x0 = ex; if (ex > x1) x1 = ex;
          if (ey < y0) y0 = ey; if (ey > y1) y1 = ey;
          if (ez < z0) z0 = ez; if (ez > z1) z1 = ez;
        }
      }
    }
    boxMin[3 * node] = x0; boxMin[3 * node + 1] = y0; boxMin[3 * node + 2] = z0;
    boxMax[3 * node] = x1; boxMax[3 * node + 1] = y1; boxMax[3 * node + 2] = z1;
  };

  // Iterative construction (an explicit stack keeps deep trees off the call stack).
  const root = nodeCount++;
  start[root] = 0;
  count[root] = n;
  level[root] = 0;
  const stack = [root];
  while (stack.length > 0) {
    const node = stack.pop()!;
    setBox(node);
    if (count[node] <= leafSize) continue;
    // Split along the longest side of the centroids' own box, at the median.
    let a0 = Infinity, a1 = -Infinity, b0 = Infinity, b1 = -Infinity, c0 = Infinity, c1 = -Infinity;
    const s = start[node], m = count[node];
    for (let k = s; k < s + m; k++) {
      const i = order[k];
      const px = points[3 * i], py = points[3 * i + 1], pz = points[3 * i + 2];
      if (px < a0) a0 = px; if (px > a1) a1 = px;
      if (py < b0) b0 = py; if (py > b1) b1 = py;
      if (pz < c0) c0 = pz; if (pz > c1) c1 = pz;
    }
    const ex = a1 - a0, ey = b1 - b0, ez = c1 - c0;
    const axis = ex >= ey && ex >= ez ? 0 : ey >= ez ? 1 : 2;
    for (let k = s; k < s + m; k++) key[k] = points[3 * order[k] + axis];
    const half = m >> 1;
    nthElement(order, key, s, s + m - 1, s + half);
    const l = nodeCount++, r = nodeCount++;
    start[l] = s; count[l] = half; level[l] = level[node] + 1;
    start[r] = s + half; count[r] = m - half; level[r] = level[node] + 1;
    left[node] = l;
    right[node] = r;
    stack.push(r, l);
  }
  return {
    order,
    start: start.slice(0, nodeCount),
    count: count.slice(0, nodeCount),
    left: left.slice(0, nodeCount),
    right: right.slice(0, nodeCount),
    boxMin: boxMin.slice(0, 3 * nodeCount),
    boxMax: boxMax.slice(0, 3 * nodeCount),
    level: level.slice(0, nodeCount),
    nodeCount,
    leafSize,
  };
}

/** Quickselect on order/key together over [lo, hi] so that position k holds the k-th smallest key. */
function nthElement(order: Int32Array, key: Float64Array, lo: number, hi: number, k: number): void {
  while (hi > lo) {
    const pivot = key[(lo + hi) >> 1];
    let i = lo, j = hi;
    while (i <= j) {
      while (key[i] < pivot) i++;
      while (key[j] > pivot) j--;
      if (i <= j) {
        const tk = key[i]; key[i] = key[j]; key[j] = tk;
        const to = order[i]; order[i] = order[j]; order[j] = to;
        i++;
        j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else return;
  }
}

/** Length of the box diagonal of a node. */
export function boxDiameter(t: ClusterTree, node: number): number {
  const a = 3 * node;
  return Math.hypot(t.boxMax[a] - t.boxMin[a], t.boxMax[a + 1] - t.boxMin[a + 1], t.boxMax[a + 2] - t.boxMin[a + 2]);
}

/** Euclidean distance between the boxes of node s in tree S and node t in tree T (0 if they overlap). */
export function boxDistance(S: ClusterTree, s: number, T: ClusterTree, t: number): number {
  let d2 = 0;
  for (let c = 0; c < 3; c++) {
    const gap = Math.max(S.boxMin[3 * s + c] - T.boxMax[3 * t + c], T.boxMin[3 * t + c] - S.boxMax[3 * s + c], 0);
    d2 += gap * gap;
  }
  return Math.sqrt(d2);
}
