// Potential and field of the solved panel charges at many points (slice grids, probe lines, field
// lines), by the treecode (treecode.ts), split over threads for large batches.
//   φ(x) = scale·Σ_images sign·Σ_j σ_j I_j(image(x)),   E = −∇φ,
// with image(x) = flip·x + shift for each grounded-plane image, the identity included (Jackson,
// sec. 2.1-2.2); by the chain rule ∂/∂x_k of I(image(x)) = flip_k·(∂_k I)(image(x)).
import { preparePanels, type Panels } from '../kernels/triangle';
import { runEvaluate, type EvaluateJob } from './jobs';
import { IDENTITY, type ImageMap } from './panel-entries';
import { fastThreads, runParallel, shared } from './pool';
import { buildPanelTree, evaluateTree, setDensitiesMany, type PanelTree } from './treecode';

export interface EvaluatorOptions {
  /** Opening angle (default 0.5: about 1e-3 relative; 0.3: about 2e-4). */
  theta: number;
  /** Threads for large batches, the calling one included. */
  threads: number;
  leafSize: number;
}

export interface FieldValues {
  /** V, one per point. */
  potential: Float64Array;
  /** V/m, 3 per point. */
  field: Float64Array;
}

export class FieldEvaluator {
  private readonly tree: PanelTree;
  private sharedTree: PanelTree | null = null;
  private readonly options: EvaluatorOptions;
  private readonly one = new Float64Array(4);
  private readonly onePoint = new Float64Array(3);

  constructor(
    mesh: { vertices: Float64Array; triangles: Uint32Array },
    sigma: Float64Array,
    private readonly scale: number,
    private readonly images: readonly ImageMap[] = IDENTITY,
    options: Partial<EvaluatorOptions> = {},
    panels?: Panels,
  ) {
    this.options = { theta: 0.5, threads: 0, leafSize: 16, ...options };
    this.tree = buildPanelTree(panels ?? preparePanels(mesh), this.options.leafSize);
    setDensitiesMany(this.tree, [sigma]);
  }

  /** New densities on the same mesh (another solve): only the moments are recomputed. */
  setDensities(sigma: Float64Array): void {
    this.setDensitiesMany([sigma]);
  }

  /** Several density sets at once: evaluateAll then gives each one's values from one walk of the tree. */
  setDensitiesMany(sigmas: readonly Float64Array[]): void {
    setDensitiesMany(this.tree, sigmas);
    this.sharedTree = null;
  }

  /** Values at many points (3 coordinates each), of the (first) density set. */
  evaluate(points: Float64Array, theta = this.options.theta): FieldValues {
    return this.evaluateAll(points, theta)[0];
  }

  /** Values at many points (3 coordinates each), one set per density set. */
  evaluateAll(points: Float64Array, theta = this.options.theta): FieldValues[] {
    const count = points.length / 3, D = this.tree.densities;
    const raw = new Float64Array(4 * D * count);
    for (const im of this.images) {
      const img = new Float64Array(3 * count);
      for (let i = 0; i < 3 * count; i++) img[i] = im.flip[i % 3] * points[i] + im.shift[i % 3];
      const part = this.sums(img, count, theta);
      for (let e = 0; e < D * count; e++) {
        raw[4 * e] += im.sign * part[4 * e];
        for (let c = 0; c < 3; c++) raw[4 * e + 1 + c] += im.sign * im.flip[c] * part[4 * e + 1 + c];
      }
    }
    return Array.from({ length: D }, (_, d) => {
      const potential = new Float64Array(count), field = new Float64Array(3 * count);
      for (let i = 0; i < count; i++) {
        const e = 4 * (i * D + d);
        potential[i] = this.scale * raw[e];
        for (let c = 0; c < 3; c++) field[3 * i + c] = -this.scale * raw[e + 1 + c];
      }
      return { potential, field };
    });
  }

  /** One point (field lines step by step): [φ, Ex, Ey, Ez]. */
  at(x: number, y: number, z: number, theta = this.options.theta): [number, number, number, number] {
    this.onePoint[0] = x;
    this.onePoint[1] = y;
    this.onePoint[2] = z;
    const v = this.evaluate(this.onePoint, theta);
    return [v.potential[0], v.field[0], v.field[1], v.field[2]];
  }

  private sums(points: Float64Array, count: number, theta: number): Float64Array {
    // Both threads from 512 points (a coarse picture's slices have 1,000-2,300 cells outside the
    // conductors; a point costs tens of microseconds, the hand-over well under a millisecond).
    const threads = count >= 512 ? fastThreads(this.options.threads || undefined) : 1;
    const D = this.tree.densities;
    if (threads <= 1) {
      const out = count === 1 && D === 1 ? this.one.fill(0) : new Float64Array(4 * D * count);
      evaluateTree(this.tree, points, 0, count, theta, out);
      return count === 1 && D === 1 ? Float64Array.from(out) : out;
    }
    const job: EvaluateJob = {
      kind: 'evaluate',
      tree: this.shareTree(),
      points: shared(points),
      out: new Float64Array(new SharedArrayBuffer(32 * D * count)),
      theta,
      count,
      counter: new Int32Array(new SharedArrayBuffer(4)),
      chunk: Math.max(32, Math.min(256, Math.ceil(count / (8 * threads)))),
    };
    const replies = runParallel(threads, job as unknown as Record<string, unknown>, () => runEvaluate({ ...job, tree: this.tree }));
    if (!replies) {
      const out = new Float64Array(4 * D * count);
      evaluateTree(this.tree, points, 0, count, theta, out);
      return out;
    }
    return new Float64Array(job.out);
  }

  /** The tree with every array in shared memory, so workers read it without copies. */
  private shareTree(): PanelTree {
    if (this.sharedTree) return this.sharedTree;
    const t = this.tree;
    const P = Object.fromEntries(Object.entries(t.P).map(([k, v]) => [k, ArrayBuffer.isView(v) ? shared(v as Float64Array) : v])) as unknown as Panels;
    const tree = Object.fromEntries(Object.entries(t.tree).map(([k, v]) => [k, ArrayBuffer.isView(v) ? shared(v as Float64Array) : v])) as unknown as PanelTree['tree'];
    this.sharedTree = {
      P,
      tree,
      densities: t.densities,
      center: shared(t.center),
      radius: shared(t.radius),
      moments: shared(t.moments),
      sigma: shared(t.sigma),
      panelRadiusSq: shared(t.panelRadiusSq),
      panelMoments: shared(t.panelMoments),
    };
    return this.sharedTree;
  }
}
