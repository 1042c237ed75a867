// Grounded planes by the method of images (Jackson, Classical Electrodynamics, 3rd ed., sec. 2.1–2.2):
// a plane x_k = c held at 0 V is replaced by the mirror image of every charge with the opposite sign.
// Planes on different axes commute, so k of them give 2^k − 1 images, each a composition of
// reflections with sign (−1)^(number of reflections). Two planes on the same axis would need an
// infinite series: only the first is used and the caller reports the others.
// The identity comes first (sign +1), so "for each image" loops include the charge itself.
import type { GroundPlane } from '../../../../grammar/scene';

export interface Image {
  /** +1 or −1: the sign of the image charge. */
  sign: number;
  /** x' = flip·x + shift per axis (flip is ±1). */
  flip: [number, number, number];
  shift: [number, number, number];
}

const AXES = { x: 0, y: 1, z: 2 } as const;

export interface ImageSet {
  images: Image[];
  /** Planes left out (a second plane on an axis already used). */
  ignored: GroundPlane[];
}

export function imageSet(planes: readonly GroundPlane[]): ImageSet {
  const used: (GroundPlane | null)[] = [null, null, null];
  const ignored: GroundPlane[] = [];
  for (const p of planes) {
    const k = AXES[p.axis];
    if (!Number.isFinite(p.at)) ignored.push(p);
    else if (used[k]) ignored.push(p);
    else used[k] = p;
  }
  let images: Image[] = [{ sign: 1, flip: [1, 1, 1], shift: [0, 0, 0] }];
  for (let k = 0; k < 3; k++) {
    const p = used[k];
    if (!p) continue;
    const reflected = images.map((im): Image => {
      const flip = [...im.flip] as Image['flip'];
      const shift = [...im.shift] as Image['shift'];
      flip[k] = -flip[k];
      shift[k] = 2 * p.at - shift[k];
      return { sign: -im.sign, flip, shift };
    });
    images = images.concat(reflected);
  }
  return { images, ignored };
}

/** The image of point (x, y, z), written to out[0..2]. */
export function reflect(im: Image, x: number, y: number, z: number, out: Float64Array | number[]): void {
  out[0] = im.flip[0] * x + im.shift[0];
  out[1] = im.flip[1] * y + im.shift[1];
  out[2] = im.flip[2] * z + im.shift[2];
}
