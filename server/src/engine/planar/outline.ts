// The outline of each planar electrode as pieces: circle (an exact arc), rect and polygon (sides,
// graded toward corners), strip (a thin segment graded toward both ends). Closed solid outlines run
// counter-clockwise, so each element's normal points out of the conductor.
import type { ShapePlanar } from '../../../../grammar/scene';
import { arcCurve, polylinePieces, signedArea2, type Piece } from './elements';

export function outlinePieces(shape: ShapePlanar, electrode: number): Piece[] {
  switch (shape.kind) {
    case 'circle': {
      const arc = arcCurve(shape.center[0], shape.center[1], shape.radius, 0, 2 * Math.PI);
      return [{ ...arc, electrode, thin: shape.hollow, gradeStart: false, gradeEnd: false }];
    }
    case 'rect': {
      const [cx, cy] = shape.center;
      const hx = shape.size[0] / 2;
      const hy = shape.size[1] / 2;
      const points: [number, number][] = [[cx - hx, cy - hy], [cx + hx, cy - hy], [cx + hx, cy + hy], [cx - hx, cy + hy]];
      return polylinePieces(points, true, electrode, shape.hollow);
    }
    case 'polygon': {
      let points = shape.points.map((p) => [p[0], p[1]] as [number, number]);
      if (signedArea2(points) < 0) points = points.reverse();
      return polylinePieces(points, true, electrode, shape.hollow);
    }
    case 'strip':
      return polylinePieces([[shape.from[0], shape.from[1]], [shape.to[0], shape.to[1]]], false, electrode, true);
  }
}
