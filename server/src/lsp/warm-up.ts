// The language code (lexer, parser, analysis, geometry checks) runs several times slower until the
// JavaScript engine has compiled it hot, so the first keystrokes after opening a file would pay for
// that. The server therefore analyses a few small scenes (one per space, the common statements)
// while it starts, before it answers the editor's first request. Each round shifts the text down a
// line, so that the parser's chunk cache (keyed by position) misses and the parser runs too.
import { analyzeText } from '../../../grammar/index';

export const WARM_UP_SCENES = [
  `scene "warm-up 3d"
space 3d
medium oil
mesh size 20 mm
let gap = 30 mm
let v = 10 kV
electrode a sphere center (0, 0, 60) mm radius 20 mm potential v
electrode b cylinder from (-50 mm, gap, 0 mm) to (50 mm, gap, 0 mm) radius 8 mm potential -v / 2
electrode c box center (0, 0, -40 mm) size (200, 200, 20) mm potential 0 V
electrode d plate center (80, 0, 60) mm size (40, 40) mm normal x floating
electrode e torus center (0, 0, 120) mm axis z major 60 mm minor 8 mm charge 1 nC
electrode f disc center (0, 0, 200) mm normal z radius 30 mm potential 2 * v
ground plane at z = -100 mm
charge p point at (0, 40, 60) mm value 2 nC
charge l line from (-100, 0, 0) mm to (100, 0, 0) mm density -0.4 nC/m
slice xz at y = 0 from (-150, -60) mm to (150, 220) mm cells 120
probe across line from (-100, 0, 30) mm to (100, 0, 30) mm samples 40
probe spot point at (0, 0, 90) mm
limit field 3 kV/mm
`,
  `scene "warm-up planar"
space planar
medium air
mesh size 2 mm
let s = 120 mm
electrode r rect center (-s / 2, 80 mm) size (60, 10) mm potential 6 kV
electrode c circle center (s / 2, 80 mm) radius 12 mm potential -6 kV
electrode w strip from (-100, 150) mm to (100, 150) mm floating
electrode t polygon (-200, 0) mm (200, 0) mm (200, 6) mm (-200, 6) mm potential 0 V
charge d point at (0, 20) mm density 1 nC/m
slice from (-220, -20) mm to (220, 200) mm cells 180
probe between line from (-30, 80) mm to (48, 80) mm samples 40
`,
  `scene "warm-up axisymmetric"
space axisymmetric
medium sf6
mesh size 4 mm
let r = 12 mm
electrode i revolve (0, -152) mm (10, -146) mm (r, -140 mm) (r, 55 mm) (10, 64) mm (0, 71) mm potential 36 kV
electrode k torus center (0, 80) mm major 40 mm minor 6 mm floating
charge q ring at (30, 110) mm density 0.2 nC/m
slice from (0, -170) mm to (140, 160) mm cells 150
probe tip point at (0, 95) mm
`,
];

/** Analyses the warm-up scenes `rounds` times, one analysis per call of `schedule` (which may run it at once); `done` runs after the last. */
export function warmUpAnalysis(rounds = 3, schedule: (next: () => void) => void = setImmediate, done?: () => void): void {
  const texts = Array.from({ length: rounds }, (_, r) => WARM_UP_SCENES.map((t) => '\n'.repeat(r + 1) + t)).flat();
  const next = () => {
    const text = texts.shift();
    if (text === undefined) return done?.();
    analyzeText(text);
    schedule(next);
  };
  schedule(next);
}
