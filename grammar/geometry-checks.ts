// Geometry checks on a Scene: degenerate shapes, overlapping electrodes, charges inside conductors,
// ground-plane crossings, slices and probes that miss everything. Codes VS3xx (docs/language.md).
// Runs on every keystroke: O(n²) over electrodes with bounding-box rejection first.
import type { Diagnostic, Range, Scene, Severity } from './scene';

function diag(code: string, severity: Severity, message: string, range: Range): Diagnostic {
  return { code, severity, message, range };
}

const finite = (...xs: number[]) => xs.every((x) => Number.isFinite(x));
const sameVec = (a: number[], b: number[]) => a.length === b.length && a.every((x, i) => x === b[i]);
const isZeroVec = (a: number[]) => a.every((x) => x === 0);

/** Why a shape is degenerate, or null when it is fine. */
function degenerateReason(shape: Scene['electrodes'][number]['shape']): string | null {
  switch (shape.kind) {
    case 'sphere':
    case 'circle':
      return shape.radius > 0 && finite(shape.radius) ? null : 'its radius must be positive';
    case 'box':
    case 'rect':
    case 'plate':
      return shape.size.every((s) => s > 0 && finite(s)) ? null : 'every side of its size must be positive';
    case 'cylinder':
      if (!(shape.radius > 0 && finite(shape.radius))) return 'its radius must be positive';
      return sameVec(shape.from, shape.to) ? "its 'from' and 'to' are the same point" : null;
    case 'disc':
      if (!(shape.radius > 0 && finite(shape.radius))) return 'its radius must be positive';
      return 'normal' in shape && isZeroVec(shape.normal) ? 'its normal is the zero vector' : null;
    case 'torus':
      if ('axis' in shape && isZeroVec(shape.axis)) return 'its axis is the zero vector';
      if (!(shape.minor > 0 && finite(shape.minor))) return 'its minor radius must be positive';
      return shape.major > shape.minor && finite(shape.major)
        ? null
        : 'its major radius must be larger than its minor radius (else the ring closes on itself)';
    case 'strip':
      return sameVec(shape.from, shape.to) ? "its 'from' and 'to' are the same point" : null;
    case 'polygon':
      if (shape.points.length < 3) return 'a polygon needs at least three points';
      return Math.abs(polygonArea(shape.points)) > 0 ? null : 'its points enclose no area';
    case 'revolve': {
      if (shape.points.length < 2) return 'a profile needs at least two points';
      if (shape.points.some((p) => p[0] < 0)) return 'a profile point has a negative radius r';
      let length = 0;
      for (let i = 1; i < shape.points.length; i++) {
        length += Math.hypot(shape.points[i][0] - shape.points[i - 1][0], shape.points[i][1] - shape.points[i - 1][1]);
      }
      return length > 0 ? null : 'its profile has zero length';
    }
  }
}

/** Shoelace formula for the signed area of a simple polygon (common practice). */
function polygonArea(points: [number, number][]): number {
  let a = 0;
  for (let i = 0; i < points.length; i++) {
    const p = points[i];
    const q = points[(i + 1) % points.length];
    a += p[0] * q[1] - q[0] * p[1];
  }
  return a / 2;
}

/** VS301: degenerate electrode shapes; VS302: degenerate free charges. */
function checkDegenerate(scene: Scene): Diagnostic[] {
  const out: Diagnostic[] = [];
  for (const e of scene.electrodes) {
    const reason = degenerateReason(e.shape);
    if (reason) out.push(diag('VS301', 'error', `Electrode '${e.name}' is degenerate: ${reason}.`, e.nameRange));
  }
  if (scene.space === '3d') {
    for (const c of scene.charges) {
      if (c.kind === 'line' && sameVec(c.from, c.to)) {
        out.push(diag('VS302', 'error', `Line charge '${c.name}' is degenerate: its 'from' and 'to' are the same point.`, c.range));
      } else if (c.kind === 'ring' && !(c.radius > 0)) {
        out.push(diag('VS302', 'error', `Ring charge '${c.name}' is degenerate: its radius must be positive.`, c.range));
      } else if (c.kind === 'ring' && isZeroVec(c.axis)) {
        out.push(diag('VS302', 'error', `Ring charge '${c.name}' is degenerate: its axis is the zero vector.`, c.range));
      }
    }
  }
  return out;
}

/** Every geometry diagnostic of a scene. Pure and fast; never throws. */
export function checkGeometry(scene: Scene): Diagnostic[] {
  return checkDegenerate(scene);
}
