// Test surfaces for the fast solver, built here so the tests do not depend on the mesher:
// a geodesic sphere (icosahedron refined by midpoint subdivision, vertices pushed to the sphere;
// common practice) and a box surface of square cells split into triangles.
import type { Mesh } from '../../server/src/engine/mesh/types';

export function icosphere(radius: number, levels: number, center: [number, number, number] = [0, 0, 0], electrode = 0): Mesh {
  const t = (1 + Math.sqrt(5)) / 2;
  let verts: number[][] = [
    [-1, t, 0], [1, t, 0], [-1, -t, 0], [1, -t, 0], [0, -1, t], [0, 1, t], [0, -1, -t], [0, 1, -t], [t, 0, -1], [t, 0, 1], [-t, 0, -1], [-t, 0, 1],
  ].map(unit);
  let faces = [
    [0, 11, 5], [0, 5, 1], [0, 1, 7], [0, 7, 10], [0, 10, 11], [1, 5, 9], [5, 11, 4], [11, 10, 2], [10, 7, 6], [7, 1, 8],
    [3, 9, 4], [3, 4, 2], [3, 2, 6], [3, 6, 8], [3, 8, 9], [4, 9, 5], [2, 4, 11], [6, 2, 10], [8, 6, 7], [9, 8, 1],
  ];
  for (let l = 0; l < levels; l++) {
    const mid = new Map<string, number>();
    const midpoint = (a: number, b: number): number => {
      const key = a < b ? `${a},${b}` : `${b},${a}`;
      let m = mid.get(key);
      if (m === undefined) {
        m = verts.length;
        verts.push(unit(verts[a].map((x, c) => (x + verts[b][c]) / 2)));
        mid.set(key, m);
      }
      return m;
    };
    const next: number[][] = [];
    for (const [a, b, c] of faces) {
      const ab = midpoint(a, b), bc = midpoint(b, c), ca = midpoint(c, a);
      next.push([a, ab, ca], [b, bc, ab], [c, ca, bc], [ab, bc, ca]);
    }
    faces = next;
  }
  verts = verts.map((v) => v.map((x, c) => center[c] + radius * x));
  return toMesh(verts, faces, electrode);
}

function unit(v: number[]): number[] {
  const r = Math.hypot(v[0], v[1], v[2]);
  return v.map((x) => x / r);
}

/** Packs vertex and face lists into a Mesh (centroids, normals, areas). */
export function toMesh(verts: number[][], faces: number[][], electrode: number | number[]): Mesh {
  const n = faces.length;
  const mesh: Mesh = {
    vertices: Float64Array.from(verts.flat()),
    triangles: Uint32Array.from(faces.flat()),
    electrode: new Uint16Array(n),
    centroid: new Float64Array(3 * n),
    normal: new Float64Array(3 * n),
    area: new Float64Array(n),
    thin: new Uint8Array(n),
    onEdge: new Uint8Array(n),
  };
  faces.forEach(([a, b, c], p) => {
    const A = verts[a], B = verts[b], C = verts[c];
    const u = [B[0] - A[0], B[1] - A[1], B[2] - A[2]];
    const v = [C[0] - A[0], C[1] - A[1], C[2] - A[2]];
    const nn = [u[1] * v[2] - u[2] * v[1], u[2] * v[0] - u[0] * v[2], u[0] * v[1] - u[1] * v[0]];
    const len = Math.hypot(nn[0], nn[1], nn[2]);
    for (let k = 0; k < 3; k++) {
      mesh.centroid[3 * p + k] = (A[k] + B[k] + C[k]) / 3;
      mesh.normal[3 * p + k] = nn[k] / len;
    }
    mesh.area[p] = len / 2;
    mesh.electrode[p] = Array.isArray(electrode) ? electrode[p] : electrode;
  });
  return mesh;
}

/** Joins meshes (vertex indices shifted). */
export function joinMeshes(parts: Mesh[]): Mesh {
  const verts: number[][] = [];
  const faces: number[][] = [];
  const owner: number[] = [];
  for (const m of parts) {
    const base = verts.length;
    for (let v = 0; v < m.vertices.length / 3; v++) verts.push([m.vertices[3 * v], m.vertices[3 * v + 1], m.vertices[3 * v + 2]]);
    for (let p = 0; p < m.triangles.length / 3; p++) {
      faces.push([base + m.triangles[3 * p], base + m.triangles[3 * p + 1], base + m.triangles[3 * p + 2]]);
      owner.push(m.electrode[p]);
    }
  }
  return toMesh(verts, faces, owner);
}

/** A box surface, `cells` squares along each side of each face, two triangles per square, normals outward. */
export function boxSurface(size: [number, number, number], cells: number, center: [number, number, number] = [0, 0, 0], electrode = 0): Mesh {
  const verts: number[][] = [];
  const faces: number[][] = [];
  const h = size.map((s) => s / 2);
  // Each face: fixed axis a at side s (±1), spanned by axes b, c with b × c = s·e_a.
  for (let a = 0; a < 3; a++) {
    for (const s of [-1, 1]) {
      let b = (a + 1) % 3, c = (a + 2) % 3;
      if (s < 0) [b, c] = [c, b];
      const base = verts.length;
      for (let i = 0; i <= cells; i++) {
        for (let j = 0; j <= cells; j++) {
          const p = [0, 0, 0];
          p[a] = center[a] + s * h[a];
          p[b] = center[b] - h[b] + (2 * h[b] * i) / cells;
          p[c] = center[c] - h[c] + (2 * h[c] * j) / cells;
          verts.push(p);
        }
      }
      const id = (i: number, j: number) => base + i * (cells + 1) + j;
      for (let i = 0; i < cells; i++) {
        for (let j = 0; j < cells; j++) {
          faces.push([id(i, j), id(i + 1, j), id(i + 1, j + 1)], [id(i, j), id(i + 1, j + 1), id(i, j + 1)]);
        }
      }
    }
  }
  return toMesh(verts, faces, electrode);
}
