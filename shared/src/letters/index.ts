// Letters and handouts as a pure layout model (records in, blocks out) that the tablet and the
// server each render to PDF, plus the rules both ends apply to letters and attachment content.
export * from './letter-layout';
export * from './dates';
export * from './visit-findings';
export * from './build-letter';
export * from './build-handout';
export * from './letter-inputs';
export * from './letter-rules';
export * from './letter-text';
export * from './attachment-content';
export * from './letter-example.fixture';
export * from './letter-records.fixture';
