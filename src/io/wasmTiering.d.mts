export declare const WASM_TIERING_FLAG: string;
export declare function tuneWasmTiering(): void;
