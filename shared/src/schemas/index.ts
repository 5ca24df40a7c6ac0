// Filled in by the schemas work; see shared/src/index.ts.
export {};
