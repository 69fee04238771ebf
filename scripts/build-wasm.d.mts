/** Types of scripts/build-wasm.mjs (for the test that checks the committed binary). */
export declare const watPath: string;
export declare const wasmPath: string;
export declare function buildKernels(): Promise<Buffer>;
