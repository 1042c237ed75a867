// meshScene: the surface mesh of every electrode of a 3d scene, at a local target panel size.
// The same code builds uniform, graded and adaptively refined meshes: only sizeAt changes.
import { characteristicLength } from '../../../../grammar/geometry';
import type { Scene3d, Shape3d } from '../../../../grammar/scene';
import { addBox, boxLines } from './box';
import { MeshBuilder } from './builder';
import { addCylinder } from './cylinder';
import { addDisc } from './disc';
import { DEFAULT_OPTIONS, type MeshOptions, type SizeAt } from './grading';
import { addPlate } from './plate';
import { addSphereSized } from './sphere';
import { addTorus } from './torus';
import type { Mesh } from './types';

export type { MeshOptions, SizeAt } from './grading';
export { EDGE_RATIO, GROWTH, gradedPoints } from './grading';
export { sphereMesh } from './sphere';
export { boxMesh } from './box';

/**
 * Panel size of the presets, relative to the scene's characteristic length L (half the largest
 * side of the electrodes' bounding box; a lone sphere's radius). `normal` puts a lone sphere at
 * 20·11² = 2420 panels (flat-panel capacitance error about −4/N ≈ −0.17%, methods.md); each step
 * halves or doubles the size, so about 4× fewer or more panels.
 */
export const PRESET_FACTOR = { coarse: 0.22, normal: 0.11, fine: 0.055 } as const;
/** Fewest segments around any circle at each preset (a thin wire's cross-section). */
export const PRESET_SEGMENTS = { coarse: 6, normal: 12, fine: 24 } as const;
/** The default guard against runaway sizes (MeshOptions.maxPanels). */
export const MAX_PANELS = DEFAULT_OPTIONS.maxPanels;

export interface MeshPlan {
  sizeAt: SizeAt;
  options: MeshOptions;
}

/** The scene's global target panel size, m: `mesh size Q` as written, or the preset times L. */
export function resolvePanelSize(scene: Scene3d): number {
  const setting = scene.mesh;
  if (setting.kind === 'size' && setting.size > 0 && Number.isFinite(setting.size)) return setting.size;
  const preset = setting.kind === 'preset' ? setting.preset : 'normal';
  return PRESET_FACTOR[preset] * characteristicLength(scene);
}

/**
 * The size function and options for a scene's mesh setting, with every size multiplied by `scale`
 * (scale 2 gives about 4× fewer panels, for the solver's coarse level). Presets also cap each body's
 * panels relative to its own size (min of the two), so a small radius beside a large dome keeps its
 * shape; an explicit `mesh size` is taken as written, with only the fewest-segments floor.
 */
export function meshPlan(scene: Scene3d, scale = 1): MeshPlan {
  const h = resolvePanelSize(scene) * scale;
  const preset = scene.mesh.kind === 'preset' ? scene.mesh.preset : null;
  const segments = preset ? PRESET_SEGMENTS[preset] : DEFAULT_OPTIONS.minSegments;
  return {
    sizeAt: () => h,
    options: {
      relative: preset ? PRESET_FACTOR[preset] * scale : Infinity,
      minSegments: Math.max(4, Math.round(segments / scale)),
      maxAspect: DEFAULT_OPTIONS.maxAspect,
      maxPanels: DEFAULT_OPTIONS.maxPanels,
    },
  };
}

/** Meshes at several levels, coarsest first, each with about 4× the panels of the one before. */
export function meshLevels(scene: Scene3d, levels = 2): Mesh[] {
  const out: Mesh[] = [];
  for (let k = levels - 1; k >= 0; k--) {
    const plan = meshPlan(scene, 2 ** k);
    out.push(meshScene(scene, plan.sizeAt, plan.options));
  }
  return out;
}

/** Whether a shape can be meshed (the geometry checks report the ones that cannot). */
function meshable(s: Shape3d): boolean {
  const pos = (x: number) => x > 0 && Number.isFinite(x);
  const nonzero = (v: number[]) => v.every(Number.isFinite) && v.some((x) => x !== 0);
  switch (s.kind) {
    case 'sphere':
      return pos(s.radius) && s.center.every(Number.isFinite);
    case 'box':
      return s.size.every(pos) && s.center.every(Number.isFinite);
    case 'cylinder':
      return pos(s.radius) && nonzero([s.to[0] - s.from[0], s.to[1] - s.from[1], s.to[2] - s.from[2]]);
    case 'disc':
      return pos(s.radius) && nonzero(s.normal) && s.center.every(Number.isFinite);
    case 'plate':
      return s.size.every(pos) && s.center.every(Number.isFinite);
    case 'torus':
      return pos(s.minor) && pos(s.major) && s.major > s.minor && nonzero(s.axis);
  }
}

/** Surface area of a shape (closed forms, common practice), for the panel estimate. */
function shapeArea(s: Shape3d): number {
  switch (s.kind) {
    case 'sphere':
      return 4 * Math.PI * s.radius ** 2;
    case 'box':
      return 2 * (s.size[0] * s.size[1] + s.size[1] * s.size[2] + s.size[2] * s.size[0]);
    case 'cylinder': {
      const l = Math.hypot(s.to[0] - s.from[0], s.to[1] - s.from[1], s.to[2] - s.from[2]);
      return 2 * Math.PI * s.radius * (s.radius + l);
    }
    case 'disc':
      return Math.PI * s.radius ** 2;
    case 'plate':
      return s.size[0] * s.size[1];
    case 'torus':
      return 4 * Math.PI ** 2 * s.major * s.minor;
  }
}

/** A rough panel count (area over an equilateral panel of the size at the body's centre), for guards. */
export function estimatePanels(scene: Scene3d, sizeAt: SizeAt): number {
  let total = 0;
  for (const e of scene.electrodes) {
    if (!meshable(e.shape)) continue;
    const c = 'center' in e.shape ? e.shape.center : e.shape.from;
    const h = sizeAt(c[0], c[1], c[2]);
    total += shapeArea(e.shape) / ((Math.sqrt(3) / 4) * h * h);
  }
  return total;
}

/**
 * The surface mesh of every meshable electrode (degenerate shapes are skipped; the geometry checks
 * report them). Panels carry their electrode's index; thin sheets and hollow shells are marked thin,
 * panels touching an edge or rim onEdge. Never throws for a scene analysis accepted.
 */
export function meshScene(scene: Scene3d, sizeAt: SizeAt, options: Partial<MeshOptions> = {}): Mesh {
  const opts: MeshOptions = { ...DEFAULT_OPTIONS, ...options };
  // Guard: non-positive or non-finite sizes fall back to the scene's normal size; runaway counts coarsen.
  const fallback = PRESET_FACTOR.normal * characteristicLength(scene);
  let safe: SizeAt = (x, y, z) => {
    const h = sizeAt(x, y, z);
    return h > 0 && Number.isFinite(h) ? h : fallback;
  };
  const estimate = estimatePanels(scene, safe);
  if (estimate > opts.maxPanels) {
    const k = Math.sqrt(estimate / opts.maxPanels);
    const inner = safe;
    safe = (x, y, z) => k * inner(x, y, z);
  }
  const b = new MeshBuilder();
  scene.electrodes.forEach((e, index) => {
    const s = e.shape;
    if (!meshable(s)) return;
    switch (s.kind) {
      case 'sphere':
        addSphereSized(b, s.center, s.radius, safe, opts, index, s.hollow);
        break;
      case 'box':
        addBox(b, boxLines(s.center, s.size, safe, opts), index, s.hollow);
        break;
      case 'cylinder':
        addCylinder(b, s.from, s.to, s.radius, safe, opts, index, s.hollow);
        break;
      case 'disc':
        addDisc(b, s.center, s.normal, s.radius, safe, opts, index);
        break;
      case 'plate':
        addPlate(b, s.center, s.size, s.normal, safe, opts, index);
        break;
      case 'torus':
        addTorus(b, s.center, s.axis, s.major, s.minor, safe, opts, index, s.hollow);
        break;
    }
  });
  return b.build();
}

/** The mesh for the scene's own `mesh` setting (level scale 1). */
export function meshForScene(scene: Scene3d, scale = 1): Mesh {
  const plan = meshPlan(scene, scale);
  return meshScene(scene, plan.sizeAt, plan.options);
}
