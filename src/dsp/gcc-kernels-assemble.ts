/**
 * Assembles the GCC kernels' WebAssembly text (./gcc-kernels.wat) into a binary module with
 * wabt (the WebAssembly Binary Toolkit's own assembler compiled to JavaScript, npm package
 * `wabt`, a development dependency). `npm run build` runs this file after tsc and writes
 * dist/dsp/gcc-kernels.wasm; under tsx and vitest (running src/ directly) ./gcc-kernels.ts
 * assembles the text at load time through the same function.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

/** The binary module of a WebAssembly text with SIMD. */
export async function assembleWat(text: string, name: string): Promise<Uint8Array> {
  const wabt = (await import('wabt')).default;
  const w = await wabt();
  const mod = w.parseWat(name, text, { simd: true });
  try {
    mod.validate();
    return Uint8Array.from(mod.toBinary({}).buffer);
  } finally {
    mod.destroy();
  }
}

/** Where the text lives: src/dsp/ beside this file, or src/dsp/ of the checkout when this runs from dist/dsp/. */
export function kernelTextPath(here: string): string {
  return fileURLToPath(new URL(here.includes('/dist/') ? '../../src/dsp/gcc-kernels.wat' : './gcc-kernels.wat', here));
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const src = kernelTextPath(import.meta.url);
  const out = fileURLToPath(new URL('./gcc-kernels.wasm', import.meta.url));
  const bin = await assembleWat(readFileSync(src, 'utf8'), 'gcc-kernels.wat');
  writeFileSync(out, bin);
  console.log(`gcc-kernels.wasm: ${bin.length} bytes`);
}
