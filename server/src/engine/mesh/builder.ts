// Accumulates triangles electrode by electrode and packs them into the flat Mesh arrays.
import type { Mesh } from './types';

export class MeshBuilder {
  private xyz: number[] = [];
  private tri: number[] = [];
  private owner: number[] = [];
  private thinFlag: number[] = [];
  private edgeVertex: Uint8Array | number[] = [];

  get vertexCount(): number {
    return this.xyz.length / 3;
  }
  get panelCount(): number {
    return this.owner.length;
  }

  /** Adds a vertex; `onEdge` marks it as lying on a sharp edge or rim. Returns its index. */
  vertex(x: number, y: number, z: number, onEdge = false): number {
    this.xyz.push(x, y, z);
    (this.edgeVertex as number[]).push(onEdge ? 1 : 0);
    return this.xyz.length / 3 - 1;
  }

  /** Adds a triangle a, b, c (counter-clockwise seen from its outward normal; `flip` reverses it). */
  triangle(a: number, b: number, c: number, electrode: number, thin: boolean, flip = false): void {
    if (flip) this.tri.push(a, c, b);
    else this.tri.push(a, b, c);
    this.owner.push(electrode);
    this.thinFlag.push(thin ? 1 : 0);
  }

  /** The vertices and triangles so far, for refinement (a builder used for one body). */
  patchwork(): { xyz: number[]; triangles: [number, number, number][] } {
    const triangles: [number, number, number][] = [];
    for (let k = 0; k < this.tri.length; k += 3) triangles.push([this.tri[k], this.tri[k + 1], this.tri[k + 2]]);
    return { xyz: [...this.xyz], triangles };
  }

  /** Adds a whole triangulated body (vertex order as given, counter-clockwise seen from outside). */
  addPatchwork(pw: { xyz: number[]; triangles: [number, number, number][] }, electrode: number, thin: boolean): void {
    const base = this.vertexCount;
    for (let k = 0; k < pw.xyz.length; k += 3) this.vertex(pw.xyz[k], pw.xyz[k + 1], pw.xyz[k + 2]);
    for (const t of pw.triangles) this.triangle(base + t[0], base + t[1], base + t[2], electrode, thin);
  }

  /** Packs everything into a Mesh: centroids, unit normals (from the vertex order) and areas. */
  build(): Mesh {
    const n = this.owner.length;
    const vertices = Float64Array.from(this.xyz);
    const triangles = Uint32Array.from(this.tri);
    const centroid = new Float64Array(3 * n);
    const normal = new Float64Array(3 * n);
    const area = new Float64Array(n);
    const onEdge = new Uint8Array(n);
    const edgeVertex = this.edgeVertex as number[];
    for (let p = 0; p < n; p++) {
      const a = triangles[3 * p], b = triangles[3 * p + 1], c = triangles[3 * p + 2];
      const ax = vertices[3 * a], ay = vertices[3 * a + 1], az = vertices[3 * a + 2];
      const bx = vertices[3 * b], by = vertices[3 * b + 1], bz = vertices[3 * b + 2];
      const cx = vertices[3 * c], cy = vertices[3 * c + 1], cz = vertices[3 * c + 2];
      centroid[3 * p] = (ax + bx + cx) / 3;
      centroid[3 * p + 1] = (ay + by + cy) / 3;
      centroid[3 * p + 2] = (az + bz + cz) / 3;
      // Triangle area and normal from the cross product (b − a) × (c − a) = 2·area·n.
      const ux = bx - ax, uy = by - ay, uz = bz - az;
      const vx = cx - ax, vy = cy - ay, vz = cz - az;
      const nx = uy * vz - uz * vy, ny = uz * vx - ux * vz, nz = ux * vy - uy * vx;
      const len = Math.hypot(nx, ny, nz);
      area[p] = len / 2;
      if (len > 0) {
        normal[3 * p] = nx / len;
        normal[3 * p + 1] = ny / len;
        normal[3 * p + 2] = nz / len;
      }
      onEdge[p] = edgeVertex[a] || edgeVertex[b] || edgeVertex[c] ? 1 : 0;
    }
    return {
      vertices,
      triangles,
      electrode: Uint16Array.from(this.owner),
      centroid,
      normal,
      area,
      thin: Uint8Array.from(this.thinFlag),
      onEdge,
    };
  }
}

/**
 * Joins two rings of vertices with a strip of triangles. Ring A lies below ring B in a local (u, v)
 * chart, u being the angle around the ring; each ring's vertex i sits at angle offset + 2πi/n.
 * Triangles are counter-clockwise in (u, v); pass `flip` when (u, v) is left-handed on the surface.
 */
export function zipRings(
  b: MeshBuilder,
  ringA: number[],
  offsetA: number,
  ringB: number[],
  offsetB: number,
  electrode: number,
  thin: boolean,
  flip: boolean,
): void {
  const na = ringA.length, nb = ringB.length;
  const angleA = (i: number) => offsetA + (2 * Math.PI * i) / na;
  const angleB = (j: number) => offsetB + (2 * Math.PI * j) / nb;
  let i = 0, j = 0;
  while (i < na || j < nb) {
    const advanceA = j >= nb || (i < na && angleA(i + 1) <= angleB(j + 1));
    if (advanceA) {
      b.triangle(ringA[i % na], ringA[(i + 1) % na], ringB[j % nb], electrode, thin, flip);
      i++;
    } else {
      b.triangle(ringA[i % na], ringB[(j + 1) % nb], ringB[j % nb], electrode, thin, flip);
      j++;
    }
  }
}
