// One shared WebAssembly memory per H-matrix, holding its packed blocks and the product's vectors,
// so that the SIMD product kernel (product-kernel.wat) runs over them in place on every thread.
// Space is handed out by bumping a shared counter (the memory's first 16 bytes) and never freed:
// the arena lives and dies with its H-matrix. The memory grows as needed up to 4 GiB (the limit of
// 32-bit addresses); an allocation past that returns −1 and the caller keeps its numbers in an
// ordinary shared buffer, which the plain JavaScript product handles.
import kernelBytes from './product-kernel.wat';

const PAGE = 65536;
const MAX_PAGES = 65536;
/** Grow in steps of 32 MiB at least, so that threads filling blocks rarely grow it. */
const GROW_PAGES = 512;

export interface Arena {
  memory: WebAssembly.Memory;
}

/** The product kernel's entry points; addresses are byte offsets into the arena's memory. */
export interface ProductKernel {
  /** Σ a[k]·x[k] for k < len: a single precision, x double. */
  dot1(a: number, x: number, len: number): number;
  blocks1(heads: number, b0: number, b1: number, values: number, x: number, y: number): void;
  blocks2(heads: number, b0: number, b1: number, values: number, x1: number, y1: number, x2: number, y2: number): void;
  blocks4(heads: number, b0: number, b1: number, values: number, x0: number, y0: number, x1: number, y1: number, x2: number, y2: number, x3: number, y3: number): void;
}

let compiled: WebAssembly.Module | null | undefined;

/** The compiled kernel, or null where WebAssembly SIMD or shared memory is missing. */
function kernelModule(): WebAssembly.Module | null {
  if (compiled === undefined) {
    try {
      compiled = new WebAssembly.Module(kernelBytes);
    } catch {
      compiled = null;
    }
  }
  return compiled;
}

/** A new arena, or null when the kernel cannot run here (everything then stays in plain JavaScript). */
export function createArena(): Arena | null {
  if (!kernelModule()) return null;
  try {
    const memory = new WebAssembly.Memory({ initial: 1, maximum: MAX_PAGES, shared: true });
    // The counter counts 16-byte units; unit 0 is the counter itself.
    Atomics.store(new Int32Array(memory.buffer, 0, 1), 0, 1);
    return { memory };
  } catch {
    return null;
  }
}

const kernels = new WeakMap<WebAssembly.Memory, ProductKernel | null>();

/**
 * The kernel bound to an arena's memory, instantiated once per memory object on this thread (the
 * module is compiled once per thread; a memory posted to a worker arrives as a new object).
 */
export function kernelFor(memory: WebAssembly.Memory): ProductKernel | null {
  let k = kernels.get(memory);
  if (k === undefined) {
    const module = kernelModule();
    try {
      k = module ? (new WebAssembly.Instance(module, { env: { memory } }).exports as unknown as ProductKernel) : null;
    } catch {
      k = null;
    }
    kernels.set(memory, k);
  }
  return k;
}

/** Reserves `bytes` (16-byte aligned) from any thread; the byte address, or −1 past 4 GiB. */
export function arenaAlloc(arena: Arena, bytes: number): number {
  const units = Math.ceil(bytes / 16);
  const start = Atomics.add(new Int32Array(arena.memory.buffer, 0, 1), 0, units);
  const end = (start + units) * 16;
  if (end > MAX_PAGES * PAGE) return -1;
  while (arena.memory.buffer.byteLength < end) {
    const short = Math.ceil((end - arena.memory.buffer.byteLength) / PAGE);
    const have = arena.memory.buffer.byteLength / PAGE;
    try {
      arena.memory.grow(Math.min(Math.max(short, GROW_PAGES), MAX_PAGES - have));
    } catch {
      // Another thread grew it meanwhile, or the system refused: look again, give up if still short.
      if (arena.memory.buffer.byteLength < end) return -1;
    }
  }
  return start * 16;
}

export function arenaFloat32(arena: Arena, address: number, length: number): Float32Array {
  return new Float32Array(arena.memory.buffer, address, length);
}

export function arenaInt32(arena: Arena, address: number, length: number): Int32Array {
  return new Int32Array(arena.memory.buffer, address, length);
}

export function arenaFloat64(arena: Arena, address: number, length: number): Float64Array {
  return new Float64Array(arena.memory.buffer, address, length);
}
