// Filled in by the clinical work; see shared/src/index.ts.
export {};
