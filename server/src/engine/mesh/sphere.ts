// Sphere: icosahedral subdivision. Each of the icosahedron's 20 faces is cut into n² triangles
// and every vertex is pushed out onto the true sphere, giving 20·n² panels and 10·n² + 2 vertices.
import type { Vec3 } from '../../../../grammar/scene';
import { MeshBuilder } from './builder';
import { type MeshOptions, REFINE_FACTOR, type SizeAt, minSize } from './grading';
import { refineToSize } from './refine';
import type { Mesh } from './types';

// The regular icosahedron: vertices (0, ±1, ±φ) and cyclic permutations, φ the golden ratio (common practice).
const PHI = (1 + Math.sqrt(5)) / 2;
const ICOSA_VERTICES: Vec3[] = [
  [-1, PHI, 0], [1, PHI, 0], [-1, -PHI, 0], [1, -PHI, 0],
  [0, -1, PHI], [0, 1, PHI], [0, -1, -PHI], [0, 1, -PHI],
  [PHI, 0, -1], [PHI, 0, 1], [-PHI, 0, -1], [-PHI, 0, 1],
];
// Faces counter-clockwise seen from outside.
const ICOSA_FACES: [number, number, number][] = [
  [0, 11, 5], [0, 5, 1], [0, 1, 7], [0, 7, 10], [0, 10, 11],
  [1, 5, 9], [5, 11, 4], [11, 10, 2], [10, 7, 6], [7, 1, 8],
  [3, 9, 4], [3, 4, 2], [3, 2, 6], [3, 6, 8], [3, 8, 9],
  [4, 9, 5], [2, 4, 11], [6, 2, 10], [8, 6, 7], [9, 8, 1],
];

/** Subdivision count n for a sphere of radius a at panel size h: equilateral panels of side h, 20n² ≥ 4πa²/(√3h²/4). */
export function sphereSubdivision(radius: number, h: number): number {
  const panels = (4 * Math.PI * radius * radius) / ((Math.sqrt(3) / 4) * h * h);
  return Math.max(1, Math.ceil(Math.sqrt(panels / 20) - 1e-9));
}

/** Adds the sphere's surface with subdivision n; outward normals. */
export function addSphere(
  b: MeshBuilder,
  center: Vec3,
  radius: number,
  n: number,
  electrode: number,
  thin: boolean,
): void {
  const index = new Map<string, number>();
  // A vertex is named by its integer barycentric weights on the icosahedron's own vertices, so points
  // on shared edges and corners are created once and computed identically from either face.
  const vertexOf = (ids: number[], weights: number[]): number => {
    const parts: [number, number][] = [];
    for (let k = 0; k < 3; k++) if (weights[k] > 0) parts.push([ids[k], weights[k]]);
    parts.sort((p, q) => p[0] - q[0]);
    const key = parts.map((p) => `${p[0]}:${p[1]}`).join(',');
    const found = index.get(key);
    if (found !== undefined) return found;
    let x = 0, y = 0, z = 0;
    for (const [id, w] of parts) {
      x += ICOSA_VERTICES[id][0] * w;
      y += ICOSA_VERTICES[id][1] * w;
      z += ICOSA_VERTICES[id][2] * w;
    }
    const l = Math.hypot(x, y, z);
    const v = b.vertex(center[0] + (radius * x) / l, center[1] + (radius * y) / l, center[2] + (radius * z) / l);
    index.set(key, v);
    return v;
  };
  for (const face of ICOSA_FACES) {
    // Point (i, j) of the face lattice has weights (n − i − j, i, j) on the face's corners (A, B, C).
    const at = (i: number, j: number) => vertexOf(face, [n - i - j, i, j]);
    for (let j = 0; j < n; j++) {
      for (let i = 0; i < n - j; i++) {
        b.triangle(at(i, j), at(i + 1, j), at(i, j + 1), electrode, thin);
        if (i + j < n - 1) b.triangle(at(i + 1, j), at(i + 1, j + 1), at(i, j + 1), electrode, thin);
      }
    }
  }
}

/** The panel size a sphere gets: the smallest target over its surface, capped by its own radius and segments. */
export function sphereSize(center: Vec3, radius: number, sizeAt: SizeAt, opts: MeshOptions): number {
  return Math.min(minSize(sizeAt, spherePoints(center, radius)), sphereCap(radius, opts));
}

/** The largest panel a sphere may have: relative to its radius, and at least minSegments around a great circle. */
function sphereCap(radius: number, opts: MeshOptions): number {
  // A great circle crosses about 5n panels for subdivision n, each about 2πa/(5n) long.
  return Math.min(opts.relative * radius, (2 * Math.PI * radius) / opts.minSegments);
}

/** The icosahedron's vertices and face centres, on the sphere: where the target size is sampled. */
function spherePoints(center: Vec3, radius: number): [number, number, number][] {
  const dirs: Vec3[] = [...ICOSA_VERTICES, ...ICOSA_FACES.map((f) => [0, 1, 2].map((k) => f.reduce((s, i) => s + ICOSA_VERTICES[i][k], 0)) as Vec3)];
  return dirs.map((v) => {
    const l = Math.hypot(v[0], v[1], v[2]);
    return [center[0] + (radius * v[0]) / l, center[1] + (radius * v[1]) / l, center[2] + (radius * v[2]) / l];
  });
}

/**
 * Adds a sphere following sizeAt: icosahedral subdivision at the largest target sampled over it
 * (20n² panels; all there is when the target is uniform), refined locally by longest-edge bisection
 * with new vertices on the sphere wherever an edge exceeds REFINE_FACTOR times the target there.
 */
export function addSphereSized(b: MeshBuilder, center: Vec3, radius: number, sizeAt: SizeAt, opts: MeshOptions, electrode: number, thin: boolean): void {
  const cap = sphereCap(radius, opts);
  const samples = spherePoints(center, radius).map((p) => Math.min(cap, sizeAt(p[0], p[1], p[2])));
  // Subdivide at the largest sampled target, then refine wherever an edge is too long for the local
  // target (nowhere when the target is uniform: then this is plain 20n² subdivision).
  const part = new MeshBuilder();
  addSphere(part, center, radius, sphereSubdivision(radius, Math.max(...samples)), electrode, thin);
  const pw = part.patchwork();
  const project = (p: Vec3): Vec3 => {
    const d = [p[0] - center[0], p[1] - center[1], p[2] - center[2]];
    const l = Math.hypot(d[0], d[1], d[2]);
    return [center[0] + (radius * d[0]) / l, center[1] + (radius * d[1]) / l, center[2] + (radius * d[2]) / l];
  };
  refineToSize(pw, (x, y, z) => Math.min(cap, sizeAt(x, y, z)), project, REFINE_FACTOR);
  b.addPatchwork(pw, electrode, thin);
}

/** A lone sphere mesh with subdivision n (20·n² panels), for tests and benchmarks. */
export function sphereMesh(center: Vec3, radius: number, n: number, hollow = false): Mesh {
  const b = new MeshBuilder();
  addSphere(b, center, radius, n, 0, hollow);
  return b.build();
}
