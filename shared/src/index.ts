// Public API of @fuselight/shared: record schemas, orthoptic computation, and the sync rules
// (hybrid logical clock, field-level merge) that the tablet and the server must agree on.
export * from './schemas/index';
export * from './clinical/index';
export * from './sync/index';
export * from './letters/index';
