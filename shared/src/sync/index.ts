// Filled in by the sync work; see shared/src/index.ts.
export {};
