// A surface mesh of flat triangles, in flat typed arrays (SI, metres).
// Built by meshScene (server/src/engine/mesh/index.ts); consumed by the kernels and solvers.

export interface Mesh {
  /** Vertex coordinates, 3 per vertex. */
  vertices: Float64Array;
  /** Vertex indices, 3 per panel, counter-clockwise seen from the outward normal. */
  triangles: Uint32Array;
  /** Electrode index of each panel (into scene.electrodes). */
  electrode: Uint16Array;
  /** Per panel: centroid (3), unit normal (3, outward for closed bodies), area. */
  centroid: Float64Array;
  normal: Float64Array;
  area: Float64Array;
  /** 1 when the panel lies on a thin sheet (disc, plate, hollow shell): its charge is the sum of both faces. */
  thin: Uint8Array;
  /** 1 when the panel touches a sharp edge or rim, where the surface charge is singular. */
  onEdge: Uint8Array;
}
