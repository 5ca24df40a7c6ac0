// Orthoptic computation: pure functions over recorded findings (no I/O, no clock). Every
// interpretation carries CLINICAL_CAUTION; invalid input throws ClinicalInputError.
export * from './clinical-input.error';
export * from './caution';
export * from './prism-dioptre';
export * from './correspondence';
export * from './deviation';
export * from './bsv-grades';
export * from './stereo-trials';
export * from './stereo-disparity';
export * from './visual-acuity';
export * from './accommodation';
export * from './near-point-of-convergence';
export * from './finding-series';
export * from './fusional-norms';
export * from './fusional-ranges';
export * from './suppression-scotoma';
export * from './interpretation';
export * from './section-labels';
