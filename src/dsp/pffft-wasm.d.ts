declare module '@echogarden/pffft-wasm/simd' {
  /** The Emscripten module factory of PFFFT (the package ships no types). */
  const factory: () => Promise<unknown>;
  export default factory;
}
