// The sync rules the tablet and the server must agree on: the hybrid logical clock and the
// field-level merge decision (docs/sync-protocol.md). Pure functions; time is always a parameter.
export * from './hlc';
export * from './merge';
