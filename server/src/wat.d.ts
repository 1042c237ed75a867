// `import bytes from './x.wat'`: the assembled WebAssembly module (scripts/wat.mjs).
declare module '*.wat' {
  const bytes: Uint8Array<ArrayBuffer>;
  export default bytes;
}
