// The boundary of each axisymmetric electrode as pieces of its (r, z) half-plane profile: sphere arc,
// disc segment on r ∈ [0, a], torus circle, cylinder outline, revolve polyline. Closed solid profiles
// run counter-clockwise in (r, z), so each element's normal (tangent turned clockwise) points out of
// the conductor. Sides lying on the axis carry no surface and are dropped; ends on the axis are not
// rims. Elements are graded toward sharp corners and open rims (planar/elements.ts).
import type { ShapeAxisymmetric } from '../../../../grammar/scene';
import { arcCurve, lineCurve, polylinePieces, signedArea2, type Piece } from '../planar/elements';

/** Pieces of one electrode's profile; `tol` is the length below which r counts as on the axis. */
export function profilePieces(shape: ShapeAxisymmetric, electrode: number, tol: number): Piece[] {
  const onAxis = (r: number) => Math.abs(r) <= tol;
  const options = { gradeOpenEnd: (r: number) => !onAxis(r), skip: (a: [number, number], b: [number, number]) => onAxis(a[0]) && onAxis(b[0]) };
  switch (shape.kind) {
    case 'sphere': {
      const [c, z] = shape.center;
      const arc = arcCurve(c, z, shape.radius, -Math.PI / 2, Math.PI / 2);
      return [{ ...arc, electrode, thin: shape.hollow, gradeStart: !onAxis(arc.x0), gradeEnd: !onAxis(c) }];
    }
    case 'disc': {
      const z = shape.center[1];
      return [{ ...lineCurve(0, z, shape.radius, z), electrode, thin: true, gradeStart: false, gradeEnd: true }];
    }
    case 'torus': {
      const arc = arcCurve(shape.major, shape.center[1], shape.minor, 0, 2 * Math.PI);
      return [{ ...arc, electrode, thin: shape.hollow, gradeStart: false, gradeEnd: false }];
    }
    case 'cylinder': {
      const z0 = Math.min(shape.from[1], shape.to[1]);
      const z1 = Math.max(shape.from[1], shape.to[1]);
      const R = shape.radius;
      const points: [number, number][] = [[0, z0], [R, z0], [R, z1], [0, z1]];
      return polylinePieces(points, false, electrode, shape.hollow, options);
    }
    case 'revolve': {
      let points = shape.points.map((p) => [p[0], p[1]] as [number, number]);
      const thin = !shape.closed || shape.hollow;
      // A closed profile is a polygon (with the side back to the first point); run it counter-clockwise.
      if (shape.closed && signedArea2(points) < 0) points = points.reverse();
      // An open profile from the axis back to the axis bounds a solid too; orient it the same way.
      if (!shape.closed && signedArea2(points) < 0) points = points.reverse();
      return polylinePieces(points, shape.closed, electrode, thin, options);
    }
  }
}
